// The fastest tier: an in-process LRU of results this process has already verified.
import { LRUCache } from 'lru-cache';
import type { CacheLayer } from './layer.js';

/** How many results the in-memory tier keeps by default (a result with its certificate is a few kB). */
export const DEFAULT_MEMORY_ENTRIES = 2000;

export class MemoryCacheLayer implements CacheLayer {
  readonly name = 'memory';
  readonly trusted = true;
  private readonly entries: LRUCache<string, string>;

  constructor(maxEntries: number = DEFAULT_MEMORY_ENTRIES) {
    this.entries = new LRUCache<string, string>({ max: maxEntries });
  }

  async get(key: string): Promise<string | undefined> {
    return this.entries.get(key);
  }

  async set(key: string, value: string): Promise<void> {
    this.entries.set(key, value);
  }

  async delete(key: string): Promise<void> {
    this.entries.delete(key);
  }

  async close(): Promise<void> {
    this.entries.clear();
  }
}
