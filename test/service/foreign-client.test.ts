// Another program calling the service with nothing but the .proto files: its own loader options (proto field
// names in snake_case, enums by name, no defaults) and a request written by hand in that form.
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import * as protoLoader from '@grpc/proto-loader';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';
import { binaryEntropy, startTestServer, type TestServer } from './harness.js';

/** The bb84-entangled problem at error rate 5 % in both bases, written out by hand (row-major 4×4 matrices). */
const problem = {
  dimension_a: 2,
  dimension_b: 2,
  constraints: [
    { label: 'qber-z', operator: { rows: 4, cols: 4, re: [0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0] }, lower: 0.05, upper: 0.05 },
    {
      label: 'qber-x',
      operator: { rows: 4, cols: 4, re: [0.5, 0, 0, -0.5, 0, 0.5, -0.5, 0, 0, -0.5, 0.5, 0, -0.5, 0, 0, 0.5] },
      lower: 0.05,
      upper: 0.05,
    },
  ],
  branches: [
    {
      label: 'key',
      kraus_operators: [{ rows: 4, cols: 4, re: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1] }],
      key_projectors: [
        { rows: 4, cols: 4, re: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0] },
        { rows: 4, cols: 4, re: [0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1] },
      ],
    },
  ],
};

describe('a client built from the .proto files alone', () => {
  let harness: TestServer;
  let client: grpc.Client & Record<string, Function>;

  beforeAll(async () => {
    harness = await startTestServer({ workers: 1, cacheDirectory: false });
    const definition = protoLoader.loadSync('renyibound/v1/service.proto', {
      keepCase: true,
      enums: String,
      includeDirs: [join(packageRoot(), 'proto')],
    });
    const RenyiBound = (grpc.loadPackageDefinition(definition) as any).renyibound.v1.RenyiBound;
    client = new RenyiBound(harness.server.address, grpc.credentials.createInsecure());
  });
  afterAll(async () => {
    client.close();
    await harness.stop();
  });

  it('solves and verifies a hand-written request', async () => {
    const request = { problem, entropy: 'VON_NEUMANN', settings: { gap_tolerance: 1e-6 }, request_id: 'foreign' };
    const reply: any = await new Promise((resolve, reject) => client.Solve(request, (e: Error | null, r: unknown) => (e ? reject(e) : resolve(r))));
    expect(reply.request_id).toBe('foreign');
    expect(reply.result.status).toBe('CERTIFIED');
    // 1 − h(0.05): the Shor–Preskill value for this problem.
    expect(reply.result.certified_lower_bound).toBeGreaterThanOrEqual(1 - binaryEntropy(0.05) - 2e-6);
    expect(reply.result.certified_lower_bound).toBeLessThanOrEqual(1 - binaryEntropy(0.05) + 1e-9);
    expect(reply.result.certificate.input_hash).toBe(reply.result.input_hash);

    const verdict: any = await new Promise((resolve, reject) =>
      client.Verify({ problem, entropy: 'VON_NEUMANN', result: reply.result }, (e: Error | null, r: unknown) => (e ? reject(e) : resolve(r))),
    );
    expect(verdict.valid).toBe(true);
  });

  it('gets INVALID_ARGUMENT naming the field for a broken request', async () => {
    const broken = { ...problem, branches: [{ ...problem.branches[0], key_projectors: [] }] };
    const error: any = await new Promise((resolve) => client.Solve({ problem: broken, entropy: 'VON_NEUMANN' }, (e: unknown) => resolve(e)));
    expect(error.code).toBe(grpc.status.INVALID_ARGUMENT);
    expect(error.details).toMatch(/^problem\.branches/);
  });
});
