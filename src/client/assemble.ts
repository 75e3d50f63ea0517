// Assembling a sweep from the cache: every point of the grid is expanded exactly as `sweep` expands it, its input
// hash computed locally, and its result read from the cache tiers (verified against the point's problem). Nothing
// is computed here; missing points are listed (and solved only when the caller asks, through runSweep).
import { RedisCacheLayer } from '../cache/redis.js';
import { ResultCache } from '../cache/result-cache.js';
import { defaultCacheDirectory, SqliteCacheLayer } from '../cache/sqlite.js';
import type { CacheLayer } from '../cache/layer.js';
import { ValidationError } from '../problem/errors.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import { prepareSolve } from '../service/prepare.js';
import { checkFor } from '../service/solve-coordinator.js';
import { ENTROPY_ENUM_NAMES } from '../problem/entropy-request.js';
import type { RemoteBatchItem } from './client.js';
import { gridPoints } from './sweep.js';

export interface AssembleOptions {
  /** SQLite directory to read (default: the user cache directory); false reads none. */
  cacheDirectory?: string | false;
  /** Shared Redis to read (the one the shard runs wrote to). */
  redisUrl?: string;
  /** Hears about entries found but rejected (tampered, damaged, from another solver version). */
  onCacheEvent?: (message: string) => void;
}

export interface Assembly {
  /** One item per grid point, by index: a result, a bad-point error, or `missing`. */
  items: RemoteBatchItem[];
  /** Indices of the points without a verified cached result. */
  missing: number[];
}

/** The cache tiers to read; Redis must answer (an assemble step against a cache it cannot read would report every point missing). */
async function openTiers(options: AssembleOptions): Promise<CacheLayer[]> {
  const layers: CacheLayer[] = [];
  if (options.cacheDirectory !== false) layers.push(SqliteCacheLayer.inDirectory(options.cacheDirectory ?? defaultCacheDirectory()));
  if (options.redisUrl !== undefined) {
    try {
      layers.push(await RedisCacheLayer.connect(options.redisUrl, { required: true }));
    } catch (error) {
      for (const layer of layers) await layer.close();
      throw new ValidationError('--redis-url', (error as Error).message);
    }
  }
  if (layers.length === 0) throw new ValidationError('--no-disk-cache', 'leaves no cache to assemble from (give --redis-url)');
  return layers;
}

export async function assembleFromCache(grid: ParameterGrid, options: AssembleOptions = {}): Promise<Assembly> {
  const points = gridPoints(grid);
  const cache = new ResultCache(await openTiers(options), (event) =>
    options.onCacheEvent?.(`${event.layer} entry ${event.inputHash.slice(0, 12)}… ${event.kind}: ${event.reason}`),
  );
  const items: RemoteBatchItem[] = [];
  const missing: number[] = [];
  try {
    for (const point of points) {
      const item: RemoteBatchItem = { index: point.index, point: point.point, entropy: point.entropy, done: items.length + 1, total: points.length };
      items.push(item);
      if (point.error !== undefined) {
        item.error = point.error;
        continue;
      }
      let prepared;
      try {
        prepared = prepareSolve(point.input!);
      } catch (error) {
        if (!(error instanceof ValidationError)) throw error;
        item.error = point.placeError(error);
        continue;
      }
      item.entropy = ENTROPY_ENUM_NAMES[prepared.request.kind];
      const result = await cache.lookup(prepared.inputHash, checkFor(prepared));
      if (result === undefined) {
        item.missing = true;
        item.error = { field: '', message: `no verified result in the cache (input hash ${prepared.inputHash})` };
        missing.push(point.index);
      } else {
        item.result = { ...result, fromCache: true };
      }
    }
  } finally {
    await cache.close();
  }
  return { items, missing };
}
