// The shared tier: one Redis that several service replicas read and write. It is a cache, so it never stands
// on a request's critical path: while it is unreachable every read is a miss and every write is skipped at once,
// the layer reconnects in the background, and each loss and return is reported once.
import { Redis } from 'ioredis';
import type { CacheLayer } from './layer.js';

/** Every key this service writes starts with this prefix, so a shared Redis can hold other data too. */
export const REDIS_KEY_PREFIX = 'renyi-bound:v1:result:';
/** How long a shared entry lives; results never go stale, this only bounds memory on the Redis side. */
export const DEFAULT_REDIS_TTL_SECONDS = 30 * 24 * 3600;
/** Connection timeout for the shared cache, in milliseconds. */
const REDIS_CONNECT_TIMEOUT_MS = 3000;
/** A command that takes longer than this (a hung or overloaded Redis) counts as a miss. */
const REDIS_COMMAND_TIMEOUT_MS = 500;
/** After a failed command the layer is skipped this long (unless the connection comes back sooner). */
const REDIS_PAUSE_AFTER_FAILURE_MS = 2000;
/** Reconnection attempts back off linearly up to this interval. */
const REDIS_MAX_RECONNECT_INTERVAL_MS = 2000;

/** Changes of the shared cache's reachability, for the log. */
export type RedisEvent =
  | { kind: 'unavailable-at-start'; url: string; reason: string }
  | { kind: 'lost'; url: string; reason: string }
  | { kind: 'available'; url: string };

export interface RedisConnectOptions {
  ttlSeconds?: number;
  /** Refuse to start when Redis cannot be reached (operators who prefer to fail fast); default: start without it. */
  required?: boolean;
  onEvent?: (event: RedisEvent) => void;
}

export class RedisCacheLayer implements CacheLayer {
  readonly name = 'redis';
  readonly trusted = false;
  /** Connected (ioredis "ready"). */
  private connected = false;
  /** A loss was reported and no return yet. */
  private reportedLost = false;
  private pausedUntil = 0;
  private everConnected = false;

  private constructor(
    readonly client: Redis,
    readonly url: string,
    private readonly ttlSeconds: number,
    private readonly onEvent: (event: RedisEvent) => void,
  ) {
    client.on('ready', () => {
      this.connected = true;
      this.everConnected = true;
      this.pausedUntil = 0;
      this.markAvailable();
    });
    // Connection trouble is reported once per loss (see markLost); the listener keeps ioredis quiet.
    client.on('error', (error: Error) => this.markLost(error.message));
    client.on('close', () => {
      this.connected = false;
      this.markLost('connection closed');
    });
  }

  /**
   * Connects. With `required`, a failed first attempt throws (fail fast); otherwise it is reported and the layer
   * keeps reconnecting in the background, so the server starts with its local tiers and joins Redis once it answers.
   */
  static async connect(url: string, options: RedisConnectOptions = {}): Promise<RedisCacheLayer> {
    const client = new Redis(url, {
      lazyConnect: true,
      // Commands fail at once while disconnected instead of queueing behind the reconnection.
      enableOfflineQueue: false,
      maxRetriesPerRequest: 0,
      connectTimeout: REDIS_CONNECT_TIMEOUT_MS,
      commandTimeout: REDIS_COMMAND_TIMEOUT_MS,
      retryStrategy: (attempt) => Math.min(attempt * 200, REDIS_MAX_RECONNECT_INTERVAL_MS),
    });
    const layer = new RedisCacheLayer(client, url, options.ttlSeconds ?? DEFAULT_REDIS_TTL_SECONDS, options.onEvent ?? (() => {}));
    // Start-up waits for the first attempt (refused at once, or the connect timeout), so that a reachable Redis
    // is in use from the first request; an unreachable one is reported and joined later.
    try {
      await client.connect();
      await client.ping();
    } catch (error) {
      if (options.required) {
        client.disconnect();
        throw new Error(`cannot reach Redis at ${url}: ${(error as Error).message}`);
      }
      if (!layer.everConnected) {
        // Reported once; the first successful connection then reports 'available'.
        layer.reportedLost = true;
        layer.onEvent({ kind: 'unavailable-at-start', url, reason: (error as Error).message });
      }
    }
    return layer;
  }

  static keyFor(inputHash: string): string {
    return REDIS_KEY_PREFIX + inputHash;
  }

  /** True while commands are sent (connected and not paused after a failure). */
  get available(): boolean {
    return this.connected && this.client.status === 'ready' && Date.now() >= this.pausedUntil;
  }

  private markLost(reason: string): void {
    if (!this.everConnected || this.reportedLost) return;
    this.reportedLost = true;
    this.onEvent({ kind: 'lost', url: this.url, reason });
  }

  private markAvailable(): void {
    if (!this.reportedLost) return;
    this.reportedLost = false;
    this.onEvent({ kind: 'available', url: this.url });
  }

  /** Runs a command when Redis is usable; a failure pauses the layer and counts as "nothing" (a miss). */
  private async attempt<T>(command: () => Promise<T>): Promise<T | undefined> {
    if (!this.available) return undefined;
    try {
      const value = await command();
      this.markAvailable();
      return value;
    } catch (error) {
      this.pausedUntil = Date.now() + REDIS_PAUSE_AFTER_FAILURE_MS;
      this.markLost((error as Error).message);
      return undefined;
    }
  }

  async get(key: string): Promise<string | undefined> {
    return (await this.attempt(() => this.client.get(RedisCacheLayer.keyFor(key)))) ?? undefined;
  }

  async set(key: string, value: string): Promise<void> {
    await this.attempt(() => this.client.set(RedisCacheLayer.keyFor(key), value, 'EX', this.ttlSeconds));
  }

  async delete(key: string): Promise<void> {
    await this.attempt(() => this.client.del(RedisCacheLayer.keyFor(key)));
  }

  async close(): Promise<void> {
    if (this.client.status === 'ready') await this.client.quit().catch(() => this.client.disconnect());
    else this.client.disconnect();
  }
}
