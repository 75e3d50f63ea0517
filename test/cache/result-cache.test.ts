// The cache tiers behind one interface, with the verifier injected as a function: what is stored, what is
// re-checked on the way out, and what happens to corrupt or tampered entries. (The real certificate verifier
// runs against these tiers in test/service/server.test.ts.)
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SolveResult } from '../../src/result/types.js';
import { SOLVER_VERSION } from '../../src/certificate/version.js';
import { MemoryCacheLayer } from '../../src/cache/memory.js';
import { RedisCacheLayer } from '../../src/cache/redis.js';
import { type CacheEvent, isCacheable, ResultCache, type ResultCheck } from '../../src/cache/result-cache.js';
import { defaultCacheDirectory, SqliteCacheLayer } from '../../src/cache/sqlite.js';
import { startTestRedis, type TestRedis } from './redis-server.js';

function sampleResult(inputHash: string, bound = 0.5): SolveResult {
  return {
    status: 'CERTIFIED',
    entropy: 'von-neumann',
    alpha: null,
    certifiedLowerBound: bound,
    upperBound: bound + 1e-7,
    gap: 1e-7,
    toleranceMargin: 1e-12,
    statisticalSlack: 0,
    maxConstraintViolation: 0,
    iterations: 12,
    seconds: 0.01,
    oracleSeconds: 0.005,
    inputHash,
    certificate: {
      inputHash,
      solverVersion: SOLVER_VERSION,
      settings: { gapTolerance: 1e-6, maxIterations: 100 },
      entropy: 'von-neumann',
      alpha: null,
      linearizationState: { rows: 1, cols: 1, re: [1] },
      multipliersLower: [0],
      multipliersUpper: [0],
      claimedBound: bound,
      toleranceMargin: 1e-12,
    },
  };
}

/** Stands in for the certificate verifier: accepts exactly the claimed bound it was told is right. */
function checkBound(expected: number): ResultCheck {
  return (result) =>
    result.certificate?.claimedBound === expected && result.certifiedLowerBound === expected
      ? { valid: true, reason: 'ok' }
      : { valid: false, reason: `claimed ${result.certificate?.claimedBound}, recomputed ${expected}` };
}

let directory: string;
beforeAll(() => {
  directory = mkdtempSync(join(tmpdir(), 'renyi-bound-cache-'));
});
afterAll(() => rmSync(directory, { recursive: true, force: true }));

describe('cache policy', () => {
  it('keeps certified and iteration-limited results, never time/cancel limits, infeasible or failed runs', () => {
    expect(isCacheable(sampleResult('a'))).toBe(true);
    expect(isCacheable({ ...sampleResult('a'), status: 'LIMIT_REACHED', limit: 'iterations' })).toBe(true);
    expect(isCacheable({ ...sampleResult('a'), status: 'LIMIT_REACHED', limit: 'no-progress' })).toBe(true);
    expect(isCacheable({ ...sampleResult('a'), status: 'LIMIT_REACHED', limit: 'time' })).toBe(false);
    expect(isCacheable({ ...sampleResult('a'), status: 'LIMIT_REACHED', limit: 'cancelled' })).toBe(false);
    expect(isCacheable({ ...sampleResult('a'), status: 'INFEASIBLE', certificate: null, certifiedLowerBound: null })).toBe(false);
    expect(isCacheable({ ...sampleResult('a'), status: 'NUMERICAL_ERROR', certificate: null, certifiedLowerBound: null })).toBe(false);
  });

  it('puts the SQLite file under $XDG_CACHE_HOME/renyi-bound, else ~/.cache/renyi-bound', () => {
    expect(defaultCacheDirectory({ XDG_CACHE_HOME: '/var/cache/me' })).toBe('/var/cache/me/renyi-bound');
    expect(defaultCacheDirectory({})).toMatch(/\.cache\/renyi-bound$/);
  });
});

describe('MemoryCacheLayer', () => {
  it('evicts the least recently used entry', async () => {
    const memory = new MemoryCacheLayer(2);
    await memory.set('a', '1');
    await memory.set('b', '2');
    await memory.get('a');
    await memory.set('c', '3');
    expect(await memory.get('a')).toBe('1');
    expect(await memory.get('b')).toBeUndefined();
  });
});

describe('ResultCache over memory and SQLite', () => {
  it('stores only verified, cacheable results and serves them back identical', async () => {
    const events: CacheEvent[] = [];
    const cache = new ResultCache([new MemoryCacheLayer(), SqliteCacheLayer.inDirectory(join(directory, 'store'))], (e) => events.push(e));
    expect(await cache.store('h1', sampleResult('h1', 0.5), checkBound(0.4))).toBe(false);
    expect(events.at(-1)).toMatchObject({ kind: 'rejected', inputHash: 'h1' });
    expect(await cache.store('h1', { ...sampleResult('h1'), status: 'LIMIT_REACHED', limit: 'time' }, checkBound(0.5))).toBe(false);
    expect(await cache.lookup('h1', checkBound(0.5))).toBeUndefined();

    expect(await cache.store('h1', sampleResult('h1', 0.5), checkBound(0.5))).toBe(true);
    expect(await cache.lookup('h1', checkBound(0.5))).toEqual(sampleResult('h1', 0.5));
    await cache.close();
  });

  it('survives a restart through the SQLite file and re-verifies what it reads from it', async () => {
    const path = join(directory, 'restart');
    const first = new ResultCache([new MemoryCacheLayer(), SqliteCacheLayer.inDirectory(path)]);
    await first.store('h2', sampleResult('h2', 0.25), checkBound(0.25));
    await first.close();

    let checks = 0;
    const counting: ResultCheck = (r) => {
      checks++;
      return checkBound(0.25)(r);
    };
    const memory = new MemoryCacheLayer();
    const second = new ResultCache([memory, SqliteCacheLayer.inDirectory(path)]);
    expect(await second.lookup('h2', counting)).toEqual(sampleResult('h2', 0.25));
    expect(checks).toBe(1);
    // The hit was promoted into memory, whose entries are trusted: no second verification.
    expect(await memory.get('h2')).toBeDefined();
    expect(await second.lookup('h2', counting)).toEqual(sampleResult('h2', 0.25));
    expect(checks).toBe(1);
    await second.close();
  });

  it('discards corrupt and tampered SQLite entries, reports them, and misses', async () => {
    const events: CacheEvent[] = [];
    const sqlite = SqliteCacheLayer.inDirectory(join(directory, 'tamper'));
    const cache = new ResultCache([new MemoryCacheLayer(), sqlite], (e) => events.push(e));

    await sqlite.set('h3', '{"status": "CERTIFIED", trailing garbage');
    expect(await cache.lookup('h3', checkBound(0.5))).toBeUndefined();
    expect(events.at(-1)).toMatchObject({ kind: 'corrupt', layer: 'sqlite', inputHash: 'h3' });
    expect(await sqlite.get('h3')).toBeUndefined();

    // A raised bound that the verifier does not reproduce.
    const tampered = sampleResult('h4', 0.9);
    await sqlite.set('h4', JSON.stringify(tampered));
    expect(await cache.lookup('h4', checkBound(0.5))).toBeUndefined();
    expect(events.at(-1)).toMatchObject({ kind: 'rejected', layer: 'sqlite', inputHash: 'h4' });
    expect(await sqlite.get('h4')).toBeUndefined();

    // An entry filed under another problem's hash.
    await sqlite.set('h5', JSON.stringify(sampleResult('h6', 0.5)));
    expect(await cache.lookup('h5', checkBound(0.5))).toBeUndefined();
    expect(events.at(-1)?.reason).toMatch(/another input hash/);
    await cache.close();
  });
});

describe('RedisCacheLayer', () => {
  let redis: TestRedis | { skipReason: string };
  beforeAll(async () => {
    redis = await startTestRedis();
    if ('skipReason' in redis) console.warn(`Redis cache tests skipped: ${redis.skipReason}`);
  });
  afterAll(async () => {
    if ('stop' in redis) await redis.stop();
  });

  it('shares verified entries between two caches and rejects a poisoned one', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const layerA = await RedisCacheLayer.connect(redis.url);
    const layerB = await RedisCacheLayer.connect(redis.url);
    const events: CacheEvent[] = [];
    const replicaA = new ResultCache([new MemoryCacheLayer(), layerA]);
    const replicaB = new ResultCache([new MemoryCacheLayer(), layerB], (e) => events.push(e));
    const hash = `test-${process.pid}-${Date.now()}`;

    await replicaA.store(hash, sampleResult(hash, 0.5), checkBound(0.5));
    expect(await replicaB.lookup(hash, checkBound(0.5))).toEqual(sampleResult(hash, 0.5));

    const poisoned = `${hash}-poisoned`;
    await layerA.client.set(RedisCacheLayer.keyFor(poisoned), JSON.stringify(sampleResult(poisoned, 0.99)));
    expect(await replicaB.lookup(poisoned, checkBound(0.5))).toBeUndefined();
    expect(events.at(-1)).toMatchObject({ kind: 'rejected', layer: 'redis', inputHash: poisoned });
    expect(await layerA.client.exists(RedisCacheLayer.keyFor(poisoned))).toBe(0);

    await layerA.client.del(RedisCacheLayer.keyFor(hash));
    await replicaA.close();
    await replicaB.close();
  });

  it('when required, fails at connect time with the URL in the message when Redis is unreachable', async () => {
    await expect(RedisCacheLayer.connect('redis://127.0.0.1:1', { required: true })).rejects.toThrow(/cannot reach Redis at redis:\/\/127\.0\.0\.1:1/);
  });
});
