// One interface for every cache tier: the service stores serialized results keyed by input hash.

/** A key–value store for serialized solve results, keyed by the problem's input hash. */
export interface CacheLayer {
  /** Short name used in log lines ('memory', 'sqlite', 'redis'). */
  readonly name: string;
  /**
   * True when every entry was verified by this process before being stored (the in-memory tier);
   * entries of untrusted tiers (a file on disk, a shared Redis) are re-verified on every read.
   */
  readonly trusted: boolean;
  get(key: string): Promise<string | undefined>;
  set(key: string, value: string): Promise<void>;
  delete(key: string): Promise<void>;
  close(): Promise<void>;
}
