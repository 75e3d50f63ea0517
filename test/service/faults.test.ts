// Faults survived, on loopback with real processes and a real Redis: a replica killed mid-sweep, Redis stopped
// mid-sweep and restarted, a replica started while Redis is down, a damaged SQLite file, a worker thread that
// dies. Every point of every sweep is re-verified by the independent verifier, and von Neumann BB84 points are
// compared with 1 − h(Q_X) (Shor & Preskill, PRL 85, 441, 2000).
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeClients, RemoteCallError, solveRemote } from '../../src/client/client.js';
import { sweepCsv } from '../../src/client/report.js';
import { runSweep } from '../../src/client/sweep.js';
import { RedisCacheLayer } from '../../src/cache/redis.js';
import { SQLITE_FILE_NAME } from '../../src/cache/sqlite.js';
import { buildExample } from '../../src/protocols/index.js';
import type { ParameterGrid } from '../../src/service/generated/renyibound/v1/ParameterGrid.js';
import { startPrivateRedis, startTestRedis, type PrivateRedis, type TestRedis } from '../cache/redis-server.js';
import { expectCsvInGridOrder, expectEveryPointVerified } from '../client/helpers.js';
import { eventually, slowProblem, startTestServer } from './harness.js';
import { runCli, startReplica, type ReplicaProcess } from './replica-process.js';

const GAP = 1e-6;
/** Makes this run's problems differ from any a shared (CI) Redis may still hold from earlier runs. */
const RUN_OFFSET = Math.random() * 1e-5;

/** BB84-size points: qber-x × qber-z. */
function bb84Grid(xs: number, zs: number): ParameterGrid {
  return {
    example: 'bb84-entangled',
    axes: [
      { name: 'qber-x', values: Array.from({ length: xs }, (_, i) => 0.01 + 0.005 * i + RUN_OFFSET) },
      { name: 'qber-z', values: Array.from({ length: zs }, (_, i) => 0.01 + 0.007 * i + RUN_OFFSET) },
    ],
    entropies: ['VON_NEUMANN'],
    settings: { gapTolerance: GAP },
  };
}

function solves(replica: ReplicaProcess): number {
  return replica.logs.filter((l) => l.event === 'solve').length;
}

function redisEvents(replica: ReplicaProcess, kind: string): number {
  return replica.logs.filter((l) => l.event === 'redis' && l.kind === kind).length;
}

describe('a replica killed with SIGKILL mid-sweep', () => {
  let redis: TestRedis | { skipReason: string };
  const replicas: ReplicaProcess[] = [];
  beforeAll(async () => {
    redis = await startTestRedis();
    if ('skipReason' in redis) {
      console.warn(`fault tests with Redis skipped: ${redis.skipReason}`);
      return;
    }
    const url = redis.url;
    replicas.push(...(await Promise.all([0, 1, 2].map(() => startReplica(['--workers', '1', '--no-disk-cache', '--redis-url', url])))));
  }, 120_000);
  afterAll(async () => {
    closeClients();
    for (const replica of replicas) await replica.stop();
    if ('stop' in redis) await redis.stop();
  });

  it('three replicas, 200 points: every point ends with a verified result, none twice, CSV in grid order', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const grid = bb84Grid(20, 10);
    const victim = replicas[1];
    let solvedByVictim = 0;
    const outcome = await runSweep(grid, {
      server: replicas.map((r) => r.address).join(','),
      inFlightPerReplica: 2,
      onItem: (item) => {
        if (item.done === 50) {
          solvedByVictim = solves(victim);
          victim.child.kill('SIGKILL');
        }
      },
    });
    expect(victim.child.signalCode ?? (await new Promise((done) => victim.child.once('exit', (_c, signal) => done(signal))))).toBe('SIGKILL');
    expect(outcome.lost).toBeUndefined();
    expect(outcome.items).toHaveLength(200);
    expectEveryPointVerified(grid, outcome.items, GAP);
    expectCsvInGridOrder(sweepCsv(outcome.items, ['qber-x', 'qber-z']), 200);
    // The victim had its share before it died; the survivors did the rest.
    expect(solvedByVictim).toBeGreaterThan(0);
    for (const survivor of [replicas[0], replicas[2]]) expect(solves(survivor)).toBeGreaterThan(0);
  }, 120_000);
});

describe('Redis stopped and restarted', () => {
  let redis: PrivateRedis | { skipReason: string };
  beforeAll(async () => {
    redis = await startPrivateRedis();
    if ('skipReason' in redis) console.warn(`Redis restart tests skipped: ${redis.skipReason}`);
  });
  afterAll(async () => {
    closeClients();
    if ('stop' in redis) await redis.stop();
  });

  async function storedInRedis(url: string, qberX: number, replica: ReplicaProcess): Promise<boolean> {
    const result = await solveRemote(replica.address, {
      problem: buildExample('bb84-entangled', { 'qber-x': qberX }),
      entropy: 'von-neumann',
      settings: { gapTolerance: GAP },
    });
    const inspector = new Redis(url);
    try {
      return (await inspector.exists(RedisCacheLayer.keyFor(result.inputHash))) === 1;
    } finally {
      inspector.disconnect();
    }
  }

  it('mid-sweep: replicas go on with the local cache, no request fails, one warning each, and they use Redis again', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const shared = redis;
    const replicas = await Promise.all([0, 1].map(() => startReplica(['--workers', '1', '--no-disk-cache', '--redis-url', shared.url])));
    try {
      const grid = bb84Grid(12, 5);
      let stopped: Promise<void> | undefined;
      let restarted: Promise<void> | undefined;
      const outcome = await runSweep(grid, {
        server: replicas.map((r) => r.address).join(','),
        inFlightPerReplica: 1,
        onItem: (item) => {
          if (item.done === 15) stopped = shared.stop();
          if (item.done === 40) restarted = stopped!.then(() => shared.start());
        },
      });
      await (restarted ?? stopped!.then(() => shared.start()));
      // No request failed or was sent twice because of Redis.
      expect(outcome.retries).toBe(0);
      expectEveryPointVerified(grid, outcome.items, GAP);
      for (const replica of replicas) {
        expect(await eventually(() => redisEvents(replica, 'available') === 1, 20_000)).toBe(true);
        expect(redisEvents(replica, 'lost')).toBe(1);
        expect(replica.logs.filter((l) => l.level === 40 && l.event === 'redis')).toHaveLength(1);
      }
      expect(await storedInRedis(shared.url, 0.031 + RUN_OFFSET, replicas[0])).toBe(true);
      expect(await storedInRedis(shared.url, 0.032 + RUN_OFFSET, replicas[1])).toBe(true);
    } finally {
      for (const replica of replicas) await replica.stop();
    }
  }, 120_000);

  it('a replica started while Redis is down starts with the local cache and joins Redis when it appears', async (context) => {
    if ('skipReason' in redis) return context.skip();
    await redis.stop();
    const replica = await startReplica(['--workers', '1', '--no-disk-cache', '--redis-url', redis.url]);
    try {
      expect(redisEvents(replica, 'unavailable-at-start')).toBe(1);
      const result = await solveRemote(replica.address, { problem: buildExample('six-state', { qber: 0.041 + RUN_OFFSET }), entropy: 'von-neumann' });
      expect(result.status).toBe('CERTIFIED');
      await redis.start();
      expect(await eventually(() => redisEvents(replica, 'available') === 1, 20_000)).toBe(true);
      expect(await storedInRedis(redis.url, 0.033 + RUN_OFFSET, replica)).toBe(true);
    } finally {
      await replica.stop();
    }
  }, 120_000);

  it('with --redis-required a replica refuses to start while Redis is down, in one line naming the URL', async (context) => {
    if ('skipReason' in redis) return context.skip();
    await redis.stop();
    try {
      const run = await runCli(['serve', '--port', '0', '--workers', '1', '--no-disk-cache', '--redis-url', redis.url, '--redis-required']);
      expect(run.status).toBe(1);
      expect(run.stderr.trim()).toMatch(new RegExp(`^renyi-bound: --redis-url: cannot reach Redis at ${redis.url.replace(/[/.]/g, '\\$&')}: .+$`));
    } finally {
      await redis.start();
    }
  }, 60_000);
});

describe('a damaged SQLite file at start', () => {
  it('is detected, moved aside, rebuilt and logged; the server serves and stores results', async () => {
    const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-damaged-'));
    writeFileSync(join(directory, SQLITE_FILE_NAME), Buffer.from('SQLite format 3\u0000'.padEnd(4096, '\u00ff')));
    const harness = await startTestServer({ workers: 1, cacheDirectory: directory });
    try {
      const warning = harness.logs.find((l) => l.event === 'cache-file');
      expect(warning).toMatchObject({ kind: 'replaced-corrupt', level: 40 });
      expect(readdirSync(directory).some((name) => name.startsWith(`${SQLITE_FILE_NAME}.corrupt-`))).toBe(true);
      const problem = buildExample('bb84-entangled', { 'qber-x': 0.045 });
      const first = await solveRemote(harness.server.address, { problem, entropy: 'von-neumann' });
      expect(first.status).toBe('CERTIFIED');
      expect(await harness.server.cache.layers[1].get(first.inputHash)).toBeDefined();
    } finally {
      closeClients();
      await harness.stop();
    }
  }, 60_000);
});

describe('a worker thread that dies', () => {
  it('is replaced; its request is retried, or answered UNAVAILABLE when retries are spent, never left hanging', async () => {
    for (const workerAttempts of [2, 1]) {
      const harness = await startTestServer({ workers: 1, cacheDirectory: false, workerAttempts });
      try {
        const solving = solveRemote(harness.server.address, {
          problem: slowProblem(0.96),
          entropy: 'von-neumann',
          settings: { gapTolerance: 1e-12, timeLimitMs: 1500 },
        }).catch((error: unknown) => error);
        expect(await eventually(() => harness.server.pool.pending === 1, 10_000)).toBe(true);
        // The injected fault: the thread running the solve is terminated under it.
        await harness.server.pool.threads[0].terminate();
        const answer = await solving;
        expect(harness.server.pool.threadLosses).toBe(1);
        if (workerAttempts === 2) {
          expect((answer as { status: string }).status).toBe('LIMIT_REACHED');
        } else {
          expect(answer).toBeInstanceOf(RemoteCallError);
          expect((answer as RemoteCallError).code).toBe(grpc.status.UNAVAILABLE);
          expect((answer as RemoteCallError).details).toMatch(/solver thread died/);
        }
        // The pool has a live thread again.
        const after = await solveRemote(harness.server.address, { problem: buildExample('six-state', { qber: 0.03 }), entropy: 'von-neumann' });
        expect(after.status).toBe('CERTIFIED');
      } finally {
        closeClients();
        await harness.stop();
      }
    }
  }, 90_000);
});
