// The service commands: serve in a child process (it must receive a real SIGTERM); health and sweep through
// their commander registrations in this process (a child per call would cost seconds of start-up each).
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { register as registerHealth } from '../../src/cli/health.js';
import { register as registerSweep } from '../../src/cli/sweep.js';
import { RenyiBoundServer } from '../../src/service/server.js';
import { packageRoot } from '../../src/problem/proto-options.js';
import { solveRemote } from '../../src/client/client.js';
import { buildExample } from '../../src/protocols/index.js';
import { runRegistered, slowProblem, startTestServer, type TestServer } from './harness.js';

const root = packageRoot();
/** The CLI from its TypeScript sources (tsx), as the rest of the test suite runs them. */
const cli = ['--import', 'tsx', join(root, 'src', 'cli', 'main.ts')];

function run(args: string[]): Promise<{ status: number; stdout: string; stderr: string }> {
  return runRegistered([registerHealth, registerSweep], args);
}

afterEach(() => {
  process.exitCode = undefined;
});

let directory: string;
beforeAll(() => {
  directory = mkdtempSync(join(tmpdir(), 'renyi-bound-cli-'));
});
afterAll(() => rmSync(directory, { recursive: true, force: true }));

describe('renyi-bound health', () => {
  let harness: TestServer;
  beforeAll(async () => {
    harness = await startTestServer({ workers: 1, cacheDirectory: false });
  });
  afterAll(async () => harness.stop());

  it('prints SERVING and exits 0, NOT_SERVING and exits 1, and fails on an unreachable server', async () => {
    const serving = await run(['health', '--server', harness.server.address]);
    expect(serving.stdout.trim()).toBe('SERVING');
    expect(serving.status).toBe(0);
    harness.server.health.setStatus('', 'NOT_SERVING');
    const notServing = await run(['health', '--server', harness.server.address]);
    expect(notServing.stdout.trim()).toBe('NOT_SERVING');
    expect(notServing.status).toBe(1);
    harness.server.health.setStatus('', 'SERVING');
    const unreachable = await run(['health', '--server', '127.0.0.1:1', '--timeout-ms', '500']);
    expect(unreachable.stdout.trim()).toBe('UNREACHABLE');
    expect(unreachable.status).toBe(1);
    const bad = await run(['health', '--server', 'not an address']);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/--server: must be host:port/);
  }, 30_000);
});

describe('renyi-bound serve', () => {
  it('drains the solve in flight on SIGTERM and exits 0', async () => {
    const child: ChildProcess = spawn(process.execPath, [...cli, 'serve', '--port', '0', '--workers', '1', '--no-disk-cache'], {
      cwd: root,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
    let output = '';
    const address = await new Promise<string>((resolve, reject) => {
      child.stdout!.on('data', (chunk: Buffer) => {
        output += chunk.toString();
        const match = /"address":"([^"]+)"/.exec(output);
        if (match) resolve(match[1]);
      });
      child.once('exit', () => reject(new Error(`serve exited early: ${output}`)));
    });
    expect(address).toMatch(/^127\.0\.0\.1:\d+$/);
    // A first call opens the connection, so that the slow solve reaches the server before the signal does.
    await solveRemote(address, { problem: buildExample('six-state'), entropy: 'von-neumann' });
    const solving = solveRemote(address, {
      problem: slowProblem(0.99),
      entropy: 'von-neumann',
      settings: { gapTolerance: 1e-12, timeLimitMs: 800 },
    });
    await new Promise((resolve) => setTimeout(resolve, 300));
    child.kill('SIGTERM');
    const result = await solving;
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('time');
    expect(await exited).toBe(0);
    expect(output).toMatch(/"event":"shutdown"/);
  }, 60_000);

  it('with --redis-required refuses to start, naming the Redis URL, when Redis cannot be reached', async () => {
    await expect(
      RenyiBoundServer.start({ port: 0, workers: 1, cacheDirectory: false, redisUrl: 'redis://127.0.0.1:1', redisRequired: true }),
    ).rejects.toThrow(/cannot reach Redis at redis:\/\/127\.0\.0\.1:1/);
  });
});

describe('renyi-bound sweep', () => {
  it('runs a grid on an embedded server and writes CSV, JSON and an SVG plot', async () => {
    const grid = {
      example: 'bb84-entangled',
      baseParameters: { alpha: 1.5 },
      axes: [{ name: 'qber-x', values: [0.01, 0.03, 0.05] }],
      entropies: ['von-neumann', 'petz-up'],
      settings: { gapTolerance: 1e-4 },
    };
    const gridPath = join(directory, 'grid.json');
    writeFileSync(gridPath, JSON.stringify(grid));
    const csv = join(directory, 'out', 'results.csv');
    const plot = join(directory, 'out', 'plot.svg');
    const result = await run(['sweep', gridPath, '--out', csv, '--plot', plot, '--workers', '2', '--no-disk-cache']);
    expect(result.status, result.stderr).toBe(0);
    const lines = readFileSync(csv, 'utf8').trim().split('\n');
    expect(lines).toHaveLength(7);
    expect(lines[0].split(',').slice(0, 5)).toEqual(['index', 'entropy', 'alpha', 'qber-x', 'status']);
    expect(lines.slice(1).every((line) => line.includes(',CERTIFIED,'))).toBe(true);
    const json = JSON.parse(readFileSync(join(directory, 'out', 'results.json'), 'utf8'));
    expect(json.items).toHaveLength(6);
    expect(json.items[0].result.certificate).toBeDefined();
    const svg = readFileSync(plot, 'utf8');
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg).toContain('von-neumann');
    expect(svg).toContain('petz-up α=1.5');
    expect(result.stdout).toMatch(/qber-x\s+von-neumann\s+petz-up α=1\.5/);
  }, 60_000);

  it('sends the grid to a running server with --server', async () => {
    const harness = await startTestServer({ workers: 1, cacheDirectory: false });
    try {
      const gridPath = join(directory, 'remote-grid.json');
      writeFileSync(gridPath, JSON.stringify({ example: 'six-state', axes: [{ name: 'qber', values: [0.02, 0.04] }], entropies: ['von-neumann'], settings: { gapTolerance: 1e-4 } }));
      const csv = join(directory, 'remote', 'results.csv');
      const result = await run(['sweep', gridPath, '--server', harness.server.address, '--out', csv]);
      expect(result.status, result.stderr).toBe(0);
      expect(readFileSync(csv, 'utf8').trim().split('\n')).toHaveLength(3);
      expect(harness.logs.filter((l) => l.event === 'solve')).toHaveLength(2);
    } finally {
      await harness.stop();
    }
  }, 30_000);

  it('exits 1 naming the field of a bad grid', async () => {
    const gridPath = join(directory, 'bad-grid.json');
    writeFileSync(gridPath, JSON.stringify({ example: 'bb84-entangled', axes: [{ name: 'qber-x', values: [0.1] }], entropies: ['VON_NEUMANN'], colour: 'red' }));
    const result = await run(['sweep', gridPath, '--no-disk-cache']);
    expect(result.status).toBe(1);
    expect(result.stderr).toMatch(/grid\.colour: unknown field/);
    writeFileSync(gridPath, JSON.stringify({ example: 'no-such', axes: [], entropies: ['VON_NEUMANN'] }));
    const unknown = await run(['sweep', gridPath, '--no-disk-cache']);
    expect(unknown.status).toBe(1);
    expect(unknown.stderr).toMatch(/grid\.example: unknown example/);
  }, 60_000);
});
