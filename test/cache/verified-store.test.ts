// The cache with the real verifier as its check: results whose stated numbers do not hold up are never stored,
// and entries from another solver version are never served. Bound checked against 1 − h(0.05) (Shor & Preskill 2000).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ResultCache, type CacheEvent, type ResultCheck } from '../../src/cache/result-cache.js';
import { SqliteCacheLayer } from '../../src/cache/sqlite.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { binaryEntropy } from '../objectives/fixtures.js';

const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-verified-cache-'));
afterAll(() => rmSync(directory, { recursive: true, force: true }));

describe('a cache checked by the full result verifier', () => {
  const problem = problemFromJson(buildExample('bb84-entangled', {}));
  const request = { kind: 'von-neumann' as const };
  const result = solve(problem, request);
  const check: ResultCheck = (r) => verifyResult(problem, request, r);

  it('stores a verified result (bound within the gap of 1 − h(0.05)) and refuses one with an edited upper bound or gap', async () => {
    expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - binaryEntropy(0.05) - 1e-6);
    const events: CacheEvent[] = [];
    const cache = new ResultCache([new SqliteCacheLayer(join(directory, 'a.sqlite'))], (e) => events.push(e));
    const edited = { ...result, upperBound: result.upperBound! + 1e-3, gap: result.gap! + 1e-3 };
    expect(await cache.store(result.inputHash, edited, check)).toBe(false);
    expect(events[0].reason).toMatch(/gap|not F at finalState/);
    expect(await cache.store(result.inputHash, result, check)).toBe(true);
    expect((await cache.lookup(result.inputHash, check))?.certifiedLowerBound).toBe(result.certifiedLowerBound);
    await cache.close();
  });

  it('does not serve an entry written by another solver version', async () => {
    const layer = new SqliteCacheLayer(join(directory, 'b.sqlite'));
    const old = { ...result, certificate: { ...result.certificate!, solverVersion: 'renyi-bound-solver/0.1.0' } };
    await layer.set(result.inputHash, JSON.stringify(old));
    const events: CacheEvent[] = [];
    const cache = new ResultCache([layer], (e) => events.push(e));
    expect(await cache.lookup(result.inputHash, () => ({ valid: true, reason: 'accept anything' }))).toBeUndefined();
    expect(events[0].reason).toMatch(/solver renyi-bound-solver\/0\.1\.0/);
    await cache.close();
  });
});
