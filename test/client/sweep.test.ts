// Sweeps spread over several replicas (in-process servers on loopback), sharded, and assembled from the cache.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import { HealthImplementation } from 'grpc-health-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { assembleFromCache } from '../../src/client/assemble.js';
import { sweepCsv } from '../../src/client/report.js';
import { gridPoints, runSweep } from '../../src/client/sweep.js';
import type { ParameterGrid } from '../../src/service/generated/renyibound/v1/ParameterGrid.js';
import { loadServicePackage } from '../../src/service/proto.js';
import { startTestServer, type TestServer } from '../service/harness.js';
import { expectCsvInGridOrder, expectEveryPointVerified } from './helpers.js';

const GAP = 1e-6;
/** Makes this file's problems differ from any other test's (nothing is served from an earlier run). */
const OFFSET = 1e-5 * (1 + (process.pid % 97) / 97);

function bb84Grid(count: number, qberZ: number): ParameterGrid {
  return {
    example: 'bb84-entangled',
    baseParameters: { 'qber-z': qberZ },
    axes: [{ name: 'qber-x', values: Array.from({ length: count }, (_, i) => 0.01 + 0.004 * i + OFFSET) }],
    entropies: ['VON_NEUMANN'],
    settings: { gapTolerance: GAP },
  };
}

function solvesLogged(harness: TestServer): number {
  return harness.logs.filter((l) => l.event === 'solve').length;
}

describe('a sweep over three replicas', () => {
  const replicas: TestServer[] = [];
  beforeAll(async () => {
    for (let i = 0; i < 3; i++) replicas.push(await startTestServer({ workers: 1, cacheDirectory: false }));
  });
  afterAll(async () => {
    for (const replica of replicas) await replica.stop();
  });

  it('spreads the points round robin over every replica, each point answered once and verified, CSV in grid order', async () => {
    const grid = bb84Grid(30, 0.02);
    const before = replicas.map(solvesLogged);
    const outcome = await runSweep(grid, { server: replicas.map((r) => r.server.address).join(','), inFlightPerReplica: 2 });
    expect(outcome.replicas).toBe(3);
    expect(outcome.lost).toBeUndefined();
    expectEveryPointVerified(grid, outcome.items, GAP);
    const handled = replicas.map((r, i) => solvesLogged(r) - before[i]);
    expect(handled.reduce((a, b) => a + b, 0)).toBe(30);
    for (const count of handled) expect(count).toBeGreaterThan(0);
    expectCsvInGridOrder(sweepCsv(outcome.items, ['qber-x']), 30);
  }, 60_000);

  it('sends a point whose replica answers UNAVAILABLE to another replica: every point still answered once', async () => {
    // A replica that is up (its health says SERVING) but fails every solve, as one going away would.
    const failing = new grpc.Server();
    let refused = 0;
    failing.addService(loadServicePackage().renyibound.v1.RenyiBound.service, {
      Solve: (_call: unknown, callback: grpc.sendUnaryData<unknown>) => {
        refused++;
        callback({ code: grpc.status.UNAVAILABLE, details: 'injected: replica going away' });
      },
      SolveBatch: () => {},
      Verify: () => {},
    });
    new HealthImplementation({ '': 'SERVING' }).addToServer(failing);
    const port = await new Promise<number>((resolve, reject) =>
      failing.bindAsync('127.0.0.1:0', grpc.ServerCredentials.createInsecure(), (error, bound) => (error ? reject(error) : resolve(bound))),
    );
    try {
      const grid = bb84Grid(16, 0.035);
      const outcome = await runSweep(grid, { server: [`127.0.0.1:${port}`, replicas[0].server.address].join(','), inFlightPerReplica: 2 });
      expect(refused).toBeGreaterThan(0);
      expect(outcome.retries).toBe(refused);
      expect(outcome.lost).toBeUndefined();
      expectEveryPointVerified(grid, outcome.items, GAP);
    } finally {
      failing.forceShutdown();
    }
  }, 60_000);

  it('finishes on the live replicas when one address of the list is down from the start', async () => {
    const grid = bb84Grid(12, 0.03);
    const down = '127.0.0.1:1';
    const outcome = await runSweep(grid, { server: [down, ...replicas.map((r) => r.server.address)].join(',') });
    expect(outcome.lost).toBeUndefined();
    expectEveryPointVerified(grid, outcome.items, GAP);
  }, 60_000);

  it('refuses to start when no replica answers, saying why', async () => {
    await expect(runSweep(bb84Grid(4, 0.04), { server: '127.0.0.1:1' })).rejects.toThrow(/UNAVAILABLE: .*ECONNREFUSED/);
  }, 30_000);
});

describe('sharded sweeps assembled from the cache', () => {
  let directory: string;
  let server: TestServer;
  beforeAll(async () => {
    directory = mkdtempSync(join(tmpdir(), 'renyi-bound-shards-'));
    server = await startTestServer({ workers: 1, cacheDirectory: directory });
  });
  afterAll(async () => {
    await server.stop();
    rmSync(directory, { recursive: true, force: true });
  });

  it('assembles every point without recomputing, reports the points of a shard that never ran, and solves them only when asked', async () => {
    const grid: ParameterGrid = { ...bb84Grid(10, 0.025), baseParameters: { 'qber-z': 0.025, alpha: 1.5 }, entropies: ['VON_NEUMANN', 'PETZ_UP'] };
    const all = gridPoints(grid).map((p) => p.index);
    for (const index of [0, 1]) {
      const outcome = await runSweep(grid, { server: server.server.address, shard: { index, count: 3 } });
      expect(outcome.items.every((item) => item.index % 3 === index)).toBe(true);
    }
    const solvesAfterShards = solvesLogged(server);
    const partial = await assembleFromCache(grid, { cacheDirectory: directory });
    expect(partial.missing).toEqual(all.filter((i) => i % 3 === 2));
    expect(partial.items).toHaveLength(all.length);
    for (const item of partial.items) expect(item.missing === true).toBe(item.index % 3 === 2);
    // Reading the cache solved nothing.
    expect(solvesLogged(server)).toBe(solvesAfterShards);

    const rest = await runSweep(grid, { server: server.server.address, only: new Set(partial.missing) });
    expect(rest.items.map((i) => i.index).sort((a, b) => a - b)).toEqual(partial.missing);
    const complete = await assembleFromCache(grid, { cacheDirectory: directory });
    expect(complete.missing).toEqual([]);
    expect(complete.items.every((item) => item.result?.fromCache === true)).toBe(true);
    expectEveryPointVerified(grid, complete.items, GAP);
  }, 60_000);
});
