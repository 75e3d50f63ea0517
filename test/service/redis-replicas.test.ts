// Two server replicas sharing one Redis (no SQLite): results flow between them, and a poisoned shared
// entry is rejected by the certificate verifier, logged, recomputed and replaced.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { RedisCacheLayer } from '../../src/cache/redis.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { entropyRequestFrom } from '../../src/problem/entropy-request.js';
import { buildExample } from '../../src/protocols/index.js';
import { solveRemote } from '../../src/client/client.js';
import { startTestRedis, type TestRedis } from '../cache/redis-server.js';
import { startTestServer, type TestServer } from './harness.js';

const GAP = 1e-4;
/** Makes this run's problems differ from any a shared (CI) Redis may still hold from earlier runs. */
const RUN_OFFSET = Math.random() * 1e-4;

describe('replicas sharing Redis', () => {
  let redis: TestRedis | { skipReason: string };
  let replicaA: TestServer | undefined;
  let replicaB: TestServer | undefined;
  let inspector: RedisCacheLayer | undefined;

  beforeAll(async () => {
    redis = await startTestRedis();
    if ('skipReason' in redis) {
      console.warn(`Redis replica tests skipped: ${redis.skipReason}`);
      return;
    }
    replicaA = await startTestServer({ workers: 1, cacheDirectory: false, redisUrl: redis.url });
    replicaB = await startTestServer({ workers: 1, cacheDirectory: false, redisUrl: redis.url });
    inspector = await RedisCacheLayer.connect(redis.url);
  });
  afterAll(async () => {
    await replicaA?.stop();
    await replicaB?.stop();
    await inspector?.close();
    if ('stop' in redis) await redis.stop();
  });

  it('a result solved on one replica is a verified cache hit on the other', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const qber = 0.02 + RUN_OFFSET;
    const request = { problem: buildExample('bb84-entangled', { 'qber-x': qber }), entropy: 'von-neumann', settings: { gapTolerance: GAP } };
    const first = await solveRemote(replicaA!.server.address, request);
    const second = await solveRemote(replicaB!.server.address, request);
    expect(first.fromCache).toBe(false);
    expect(second.fromCache).toBe(true);
    expect({ ...second, fromCache: false }).toEqual(first);
  });

  it('rejects a poisoned Redis entry, logs it, recomputes and stores a valid one', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const qber = 0.03 + RUN_OFFSET;
    const problem = buildExample('bb84-entangled', { 'qber-x': qber });
    const request = { problem, entropy: 'von-neumann', settings: { gapTolerance: GAP } };
    const honest = await solveRemote(replicaA!.server.address, request);
    const key = RedisCacheLayer.keyFor(honest.inputHash);
    const stored = JSON.parse((await inspector!.client.get(key))!);
    // Someone with write access to the shared Redis raises the bound.
    stored.certifiedLowerBound += 0.05;
    stored.certificate.claimedBound += 0.05;
    await inspector!.client.set(key, JSON.stringify(stored));

    const recomputed = await solveRemote(replicaB!.server.address, request);
    expect(recomputed.fromCache).toBe(false);
    expect(recomputed.certifiedLowerBound).toBeCloseTo(honest.certifiedLowerBound!, 9);
    const rejection = replicaB!.logs.find((l) => l.event === 'cache' && l.kind === 'rejected' && l.inputHash === honest.inputHash);
    expect(rejection).toMatchObject({ layer: 'redis' });

    const replaced = JSON.parse((await inspector!.client.get(key))!);
    const report = verifyResult(problemFromJson(problem), entropyRequestFrom('von-neumann'), replaced);
    expect(report.valid).toBe(true);
    expect(replaced.certifiedLowerBound).toBeCloseTo(honest.certifiedLowerBound!, 9);
  });

  it('discards an entry that is not even JSON and recomputes', async (context) => {
    if ('skipReason' in redis) return context.skip();
    const qber = 0.04 + RUN_OFFSET;
    const request = { problem: buildExample('bb84-entangled', { 'qber-x': qber }), entropy: 'von-neumann', settings: { gapTolerance: GAP } };
    const honest = await solveRemote(replicaA!.server.address, request);
    await inspector!.client.set(RedisCacheLayer.keyFor(honest.inputHash), '\u0000garbage');
    const recomputed = await solveRemote(replicaB!.server.address, request);
    expect(recomputed.fromCache).toBe(false);
    expect(recomputed.status).toBe('CERTIFIED');
    expect(replicaB!.logs.some((l) => l.event === 'cache' && l.kind === 'corrupt' && l.inputHash === honest.inputHash)).toBe(true);
  });
});
