// The embedded persistent tier: one SQLite file under the user's cache directory.
import { mkdirSync } from 'node:fs';
import { homedir } from 'node:os';
import { dirname, join } from 'node:path';
import Database from 'better-sqlite3';
import type { CacheLayer } from './layer.js';

/** File name of the result database inside the cache directory. */
export const SQLITE_FILE_NAME = 'results.sqlite';

/** $XDG_CACHE_HOME/renyi-bound, else ~/.cache/renyi-bound (the XDG base-directory convention). */
export function defaultCacheDirectory(env: NodeJS.ProcessEnv = process.env): string {
  const base = env.XDG_CACHE_HOME && env.XDG_CACHE_HOME.length > 0 ? env.XDG_CACHE_HOME : join(homedir(), '.cache');
  return join(base, 'renyi-bound');
}

export class SqliteCacheLayer implements CacheLayer {
  readonly name = 'sqlite';
  readonly trusted = false;
  private readonly database: Database.Database;
  private readonly selectStatement: Database.Statement<[string], { result_json: string }>;
  private readonly upsertStatement: Database.Statement<[string, string, number]>;
  private readonly deleteStatement: Database.Statement<[string]>;

  /** `path` is the database file; its directory is created when missing. */
  constructor(readonly path: string) {
    mkdirSync(dirname(path), { recursive: true });
    this.database = new Database(path);
    // WAL lets several local server processes read while one writes.
    this.database.pragma('journal_mode = WAL');
    this.database.exec(
      'CREATE TABLE IF NOT EXISTS results (input_hash TEXT PRIMARY KEY, result_json TEXT NOT NULL, stored_at INTEGER NOT NULL)',
    );
    this.selectStatement = this.database.prepare('SELECT result_json FROM results WHERE input_hash = ?');
    this.upsertStatement = this.database.prepare(
      'INSERT INTO results (input_hash, result_json, stored_at) VALUES (?, ?, ?) ' +
        'ON CONFLICT(input_hash) DO UPDATE SET result_json = excluded.result_json, stored_at = excluded.stored_at',
    );
    this.deleteStatement = this.database.prepare('DELETE FROM results WHERE input_hash = ?');
  }

  static inDirectory(directory: string): SqliteCacheLayer {
    return new SqliteCacheLayer(join(directory, SQLITE_FILE_NAME));
  }

  async get(key: string): Promise<string | undefined> {
    return this.selectStatement.get(key)?.result_json;
  }

  async set(key: string, value: string): Promise<void> {
    this.upsertStatement.run(key, value, Date.now());
  }

  async delete(key: string): Promise<void> {
    this.deleteStatement.run(key);
  }

  async close(): Promise<void> {
    if (this.database.open) this.database.close();
  }
}
