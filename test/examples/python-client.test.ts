// The Python client of examples/python/ against a real server, and the ListExamples rpc it starts with.
// Outside reference inside the client: Shor & Preskill (PRL 85, 441, 2000), 1 − h(Q) for entanglement-based BB84.
import { execFile, spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';
import { exampleCatalogue } from '../../src/protocols/catalogue.js';
import { EXAMPLES } from '../../src/protocols/index.js';
import { closeClients, renyiBoundClient } from '../../src/client/client.js';
import type { ListExamplesReply__Output } from '../../src/service/generated/renyibound/v1/ListExamplesReply.js';
import { startTestServer, type TestServer } from '../service/harness.js';

const PYTHON = '/usr/bin/python3';
const CLIENT = join(packageRoot(), 'examples', 'python', 'client.py');

/** Why the Python client cannot run here, or null when /usr/bin/python3 sees grpc and protobuf. */
function pythonUnavailable(): string | null {
  const probe = spawnSync(PYTHON, ['-c', 'import grpc, google.protobuf'], { encoding: 'utf8' });
  if (probe.error) return `${PYTHON} not found`;
  if (probe.status !== 0) return `${PYTHON} lacks python3-grpcio / python3-protobuf (${probe.stderr.trim().split('\n').pop()})`;
  return null;
}

const unavailable = pythonUnavailable();
// .ci/run sets this: in CI the client must run, a missing package is a failure rather than a skip.
const required = process.env.RENYI_BOUND_REQUIRE_PYTHON_CLIENT === '1';
if (unavailable !== null) {
  process.stderr.write(`python client test ${required ? 'cannot run' : 'skipped'}: ${unavailable}\n`);
}

describe('the example builders over the wire and a client in Python', () => {
  let harness: TestServer;

  beforeAll(async () => {
    harness = await startTestServer({ workers: 1, cacheDirectory: false });
  });
  afterAll(async () => {
    closeClients();
    await harness.stop();
  });

  it('ListExamples returns every registered builder with its parameters, defaults and ranges', async () => {
    const reply = await new Promise<ListExamplesReply__Output>((resolve, reject) =>
      renyiBoundClient(harness.server.address).ListExamples({}, (error, value) => (error ? reject(error) : resolve(value!))),
    );
    expect(reply).toEqual(exampleCatalogue());
    expect(reply.examples.map((e) => e.name)).toEqual(Object.keys(EXAMPLES));
    for (const example of reply.examples) {
      for (const p of example.parameters) expect(p.minimum <= p.defaultValue && p.defaultValue <= p.maximum).toBe(true);
    }
  });

  it.skipIf(unavailable !== null && !required)('examples/python/client.py solves, streams a grid and verifies, exit 0', async () => {
    expect(unavailable, 'in CI /usr/bin/python3 must see python3-grpcio and python3-protobuf').toBeNull();
    // Asynchronous on purpose: the server runs in this process and must keep answering while Python waits.
    const run = await new Promise<{ code: number; stdout: string; stderr: string }>((resolve) => {
      execFile(PYTHON, [CLIENT, '--server', harness.server.address], { timeout: 240_000 }, (error, stdout, stderr) =>
        resolve({ code: error ? ((error as { code?: number }).code ?? 1) : 0, stdout, stderr }),
      );
    });
    expect(run.stderr).toBe('');
    expect(run.stdout).toContain('solve: status CERTIFIED');
    expect(run.stdout).toContain('verify: valid True');
    expect(run.stdout).toContain('python client: all checks passed');
    expect(run.code).toBe(0);
  });
});
