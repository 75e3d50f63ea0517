// The client commands as a user meets them: a server that is down is one line `renyi-bound: <address>: <reason>`
// and exit 1 (no stack trace); `health --wait` outlasts a server's start-up; sharded sweeps are assembled from the
// cache with missing points reported; `cache info|clear` shows and empties the disk cache.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { register as registerAssemble } from '../../src/cli/assemble.js';
import { register as registerCache } from '../../src/cli/cache.js';
import { register as registerHealth } from '../../src/cli/health.js';
import { register as registerSolve } from '../../src/cli/solve.js';
import { register as registerSweep } from '../../src/cli/sweep.js';
import { register as registerVerify } from '../../src/cli/verify.js';
import { closeClients } from '../../src/client/client.js';
import { buildExample, EXAMPLES } from '../../src/protocols/index.js';
import { runRegistered, startTestServer, type TestServer } from '../service/harness.js';
import { startReplica } from '../service/replica-process.js';

async function run(args: string[]): Promise<{ status: number; stdout: string; stderr: string }> {
  try {
    return await runRegistered([registerAssemble, registerCache, registerHealth, registerSolve, registerSweep, registerVerify], args);
  } finally {
    closeClients();
  }
}

afterEach(() => {
  process.exitCode = undefined;
});

let directory: string;
beforeAll(() => {
  directory = mkdtempSync(join(tmpdir(), 'renyi-bound-client-cli-'));
});
afterAll(() => rmSync(directory, { recursive: true, force: true }));

const DOWN = '127.0.0.1:1';
const ONE_LINE = new RegExp(`^renyi-bound: ${DOWN.replace(/\./g, '\\.')}: unreachable \\(.*ECONNREFUSED.*\\)\\n$`);

describe('client commands against a server that is down', () => {
  it('solve, sweep and health answer one line naming the address, and exit 1', async () => {
    const problem = join(directory, 'problem.json');
    writeFileSync(problem, JSON.stringify(buildExample('bb84-entangled')));
    const grid = join(directory, 'grid.json');
    writeFileSync(grid, JSON.stringify({ example: 'six-state', axes: [{ name: 'qber', values: [0.02, 0.04] }], entropies: ['von-neumann'] }));

    const solve = await run(['solve', problem, '--entropy', 'von-neumann', '--server', DOWN]);
    expect(solve.status).toBe(1);
    expect(solve.stderr).toMatch(ONE_LINE);
    const sweep = await run(['sweep', grid, '--server', DOWN, '--out', join(directory, 'down.csv')]);
    expect(sweep.status).toBe(1);
    expect(sweep.stderr).toMatch(ONE_LINE);
    const health = await run(['health', '--server', DOWN]);
    expect(health.status).toBe(1);
    expect(health.stdout).toBe('UNREACHABLE\n');
    expect(health.stderr).toMatch(ONE_LINE);
    const result = join(directory, 'result.json');
    writeFileSync(result, (await run(['solve', problem, '--entropy', 'von-neumann'])).stdout);
    const verify = await run(['verify', result, '--problem', problem, '--server', DOWN]);
    expect(verify.status).toBe(1);
    expect(verify.stderr).toMatch(ONE_LINE);
  }, 60_000);

  it('a misspelt grid axis is one line naming the axis, before anything runs', async () => {
    const grid = join(directory, 'misspelt.json');
    writeFileSync(grid, JSON.stringify({ example: 'six-state', axes: [{ name: 'qbr', values: [0.01, 0.02, 0.03, 0.04] }], entropies: ['von-neumann'] }));
    const sweep = await run(['sweep', grid, '--server', DOWN]);
    expect(sweep.status).toBe(1);
    const expected = [...EXAMPLES['six-state'].parameters.map((p) => p.name), 'alpha'].join(', ');
    expect(sweep.stderr).toBe(`renyi-bound: grid.axes[0].name: "qbr" is not a parameter of six-state (expected ${expected})\n`);
  });
});

describe('verify --server', () => {
  it('re-checks a result on the server (Verify RPC) and rejects one whose upper bound was edited', async () => {
    const harness = await startTestServer({ workers: 1, cacheDirectory: false });
    try {
      const problem = join(directory, 'verify-problem.json');
      writeFileSync(problem, JSON.stringify(buildExample('bb84-entangled', { 'qber-z': 0.05, 'qber-x': 0.05 })));
      const solved = await run(['solve', problem, '--entropy', 'von-neumann']);
      const result = join(directory, 'verify-result.json');
      writeFileSync(result, solved.stdout);
      const answer = await run(['verify', result, '--problem', problem, '--server', harness.server.address]);
      expect(answer.status).toBe(0);
      const report = JSON.parse(answer.stdout);
      expect(report.valid).toBe(true);
      // Shor–Preskill (PRL 85, 441, 2000): min H(Z|E) = 1 − h(0.05) ≈ 0.713603 for BB84 with error rate 0.05.
      const h = -0.05 * Math.log2(0.05) - 0.95 * Math.log2(0.95);
      expect(report.certifiedLowerBound).toBeLessThanOrEqual(1 - h + 1e-12);
      expect(report.certifiedLowerBound).toBeGreaterThan(1 - h - 1e-6);
      const edited = JSON.parse(solved.stdout);
      edited.upperBound += 0.01;
      writeFileSync(result, JSON.stringify(edited));
      const refused = await run(['verify', result, '--problem', problem, '--server', harness.server.address]);
      expect(refused.status).toBe(1);
      expect(JSON.parse(refused.stdout).valid).toBe(false);
    } finally {
      await harness.stop();
    }
  }, 60_000);
});

describe('health --wait', () => {
  it('keeps asking while the server starts, then prints SERVING and exits 0', async () => {
    const { createServer } = await import('node:net');
    // A free port, then a server started on it a moment after the health command began asking.
    const port = await new Promise<number>((resolve) => {
      const probe = createServer().listen(0, '127.0.0.1', () => {
        const { port: free } = probe.address() as { port: number };
        probe.close(() => resolve(free));
      });
    });
    const asking = run(['health', '--server', `127.0.0.1:${port}`, '--wait', '60', '--timeout-ms', '1000']);
    const replica = await startReplica(['--port', String(port), '--workers', '1', '--no-disk-cache']);
    try {
      const answer = await asking;
      expect(answer.stdout).toBe('SERVING\n');
      expect(answer.status).toBe(0);
    } finally {
      await replica.stop();
    }
  }, 90_000);

  it('with a list prints one line per server and exits 1 unless all serve', async () => {
    const harness = await startTestServer({ workers: 1, cacheDirectory: false });
    try {
      const answer = await run(['health', '--server', `${harness.server.address},${DOWN}`, '--wait', '0.5', '--timeout-ms', '300']);
      expect(answer.stdout).toBe(`${harness.server.address} SERVING\n${DOWN} UNREACHABLE\n`);
      expect(answer.status).toBe(1);
    } finally {
      await harness.stop();
    }
  }, 30_000);
});

describe('sharded sweep, assemble and the disk cache', () => {
  let server: TestServer;
  let cacheDir: string;
  beforeAll(async () => {
    cacheDir = join(directory, 'cache');
    server = await startTestServer({ workers: 1, cacheDirectory: cacheDir });
  });
  afterAll(async () => server.stop());

  it('runs shards, assembles them without recomputing, reports a missing shard, fills it with --compute-missing', async () => {
    const grid = join(directory, 'sharded.json');
    const qbers = [0.011, 0.021, 0.031, 0.041, 0.051, 0.061];
    writeFileSync(grid, JSON.stringify({ example: 'six-state', axes: [{ name: 'qber', values: qbers }], entropies: ['von-neumann'], settings: { gapTolerance: 1e-6 } }));
    const shard0 = await run(['sweep', grid, '--server', server.server.address, '--shard', '0/2', '--out', join(directory, 'shard-0.csv')]);
    expect(shard0.status, shard0.stderr).toBe(0);
    expect(readFileSync(join(directory, 'shard-0.csv'), 'utf8').trim().split('\n').slice(1).map((l) => l.split(',')[0])).toEqual(['0', '2', '4']);

    const out = join(directory, 'assembled.csv');
    const partial = await run(['assemble', grid, '--cache-dir', cacheDir, '--out', out]);
    expect(partial.status).toBe(1);
    expect(partial.stderr).toMatch(/point 1 \(von_neumann qber=0\.021\): missing from the cache/);
    expect(partial.stderr).toMatch(/6 points: 3 from the cache or solved, 3 missing, 0 bad/);
    const rows = readFileSync(out, 'utf8').trim().split('\n').slice(1);
    expect(rows.map((r) => r.split(',')[4])).toEqual(['CERTIFIED', 'MISSING', 'CERTIFIED', 'MISSING', 'CERTIFIED', 'MISSING']);

    const filled = await run(['assemble', grid, '--cache-dir', cacheDir, '--out', out, '--compute-missing', '--server', server.server.address]);
    expect(filled.status, filled.stderr).toBe(0);
    expect(readFileSync(out, 'utf8').trim().split('\n').slice(1).every((r) => r.includes(',CERTIFIED,'))).toBe(true);
  }, 60_000);

  it('cache info shows the file and its results; cache clear empties it', async () => {
    const info = JSON.parse((await run(['cache', 'info', '--cache-dir', cacheDir])).stdout);
    expect(info).toMatchObject({ directory: cacheDir, exists: true });
    expect(info.results).toBeGreaterThanOrEqual(6);
    expect(info.bytes).toBeGreaterThan(0);
    const cleared = JSON.parse((await run(['cache', 'clear', '--cache-dir', cacheDir])).stdout);
    expect(cleared.cleared).toBe(info.results);
    expect(JSON.parse((await run(['cache', 'info', '--cache-dir', cacheDir])).stdout).results).toBe(0);
  }, 30_000);
});
