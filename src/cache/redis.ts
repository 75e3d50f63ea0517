// The shared tier: one Redis that several service replicas read and write.
import { Redis } from 'ioredis';
import type { CacheLayer } from './layer.js';

/** Every key this service writes starts with this prefix, so a shared Redis can hold other data too. */
export const REDIS_KEY_PREFIX = 'renyi-bound:v1:result:';
/** How long a shared entry lives; results never go stale, this only bounds memory on the Redis side. */
export const DEFAULT_REDIS_TTL_SECONDS = 30 * 24 * 3600;
/** Fail a command after this many reconnection attempts rather than hanging a solve on a dead cache. */
const REDIS_RETRIES_PER_REQUEST = 1;
/** Connection timeout for the shared cache, in milliseconds. */
const REDIS_CONNECT_TIMEOUT_MS = 3000;

export class RedisCacheLayer implements CacheLayer {
  readonly name = 'redis';
  readonly trusted = false;

  private constructor(
    readonly client: Redis,
    private readonly ttlSeconds: number,
  ) {}

  /** Connects and pings, so a wrong URL fails at start-up with a clear message instead of on the first solve. */
  static async connect(
    url: string,
    options: { ttlSeconds?: number; onConnectionError?: (error: Error) => void } = {},
  ): Promise<RedisCacheLayer> {
    const client = new Redis(url, {
      maxRetriesPerRequest: REDIS_RETRIES_PER_REQUEST,
      connectTimeout: REDIS_CONNECT_TIMEOUT_MS,
      lazyConnect: true,
    });
    // Connection trouble surfaces as failed commands (a cache miss, logged); the listener keeps ioredis quiet.
    client.on('error', options.onConnectionError ?? (() => {}));
    try {
      await client.connect();
      await client.ping();
    } catch (error) {
      client.disconnect();
      throw new Error(`cannot reach Redis at ${url}: ${(error as Error).message}`);
    }
    return new RedisCacheLayer(client, options.ttlSeconds ?? DEFAULT_REDIS_TTL_SECONDS);
  }

  static keyFor(inputHash: string): string {
    return REDIS_KEY_PREFIX + inputHash;
  }

  async get(key: string): Promise<string | undefined> {
    const value = await this.client.get(RedisCacheLayer.keyFor(key));
    return value ?? undefined;
  }

  async set(key: string, value: string): Promise<void> {
    await this.client.set(RedisCacheLayer.keyFor(key), value, 'EX', this.ttlSeconds);
  }

  async delete(key: string): Promise<void> {
    await this.client.del(RedisCacheLayer.keyFor(key));
  }

  async close(): Promise<void> {
    if (this.client.status !== 'end') await this.client.quit().catch(() => this.client.disconnect());
  }
}
