// Single-round solves cached by input hash in the project's result cache (memory → SQLite), so that re-running a
// key-length sweep in a new process is cheap. Entries are verified against the requesting problem on read.
import { ResultCache } from '../cache/result-cache.js';
import { MemoryCacheLayer, DEFAULT_MEMORY_ENTRIES } from '../cache/memory.js';
import { SqliteCacheLayer, defaultCacheDirectory } from '../cache/sqlite.js';
import type { CacheLayer } from '../cache/layer.js';
import { verifyResult } from '../certificate/verify.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import { resolveSolverSettings } from '../frank-wolfe/settings.js';
import { inputHash } from '../problem/hash.js';
import { localSolver, type SingleRoundSolver } from './single-round.js';

/** A solver that answers from `cache` when it can and stores what it computes (the cache decides what is cacheable). */
export function cachedSolver(cache: ResultCache, solver: SingleRoundSolver = localSolver): SingleRoundSolver {
  return async (problem, request, settings, warmStart) => {
    const hash = inputHash(problem, request, resolveSolverSettings(settings), SOLVER_VERSION);
    const check = (result: Parameters<typeof verifyResult>[2]) =>
      result.inputHash === hash ? verifyResult(problem, request, result) : { valid: false, reason: 'result answers another input hash' };
    const cached = await cache.lookup(hash, check);
    if (cached) return cached;
    const result = await solver(problem, request, settings, warmStart);
    await cache.store(hash, result, check);
    return result;
  };
}

/** The command line's cache: memory, plus the SQLite file `serve` uses unless `directory` is false. */
export function localResultCache(directory: string | false | undefined): ResultCache {
  const layers: CacheLayer[] = [new MemoryCacheLayer(DEFAULT_MEMORY_ENTRIES)];
  if (directory !== false) layers.push(SqliteCacheLayer.inDirectory(directory ?? defaultCacheDirectory()));
  return new ResultCache(layers);
}
