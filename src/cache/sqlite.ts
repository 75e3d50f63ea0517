// The embedded persistent tier: one SQLite file under the user's cache directory. A file that is not a
// sound database (truncated, overwritten) is detected when opened, moved aside and replaced by an empty one.
import { existsSync, mkdirSync, readdirSync, renameSync, rmSync, statSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import Database from 'better-sqlite3';
import { SQLITE_FILE_NAME } from './directory.js';
import type { CacheLayer } from './layer.js';

export { defaultCacheDirectory, SQLITE_FILE_NAME } from './directory.js';
/** SQLite's companion files in WAL mode. */
const COMPANION_SUFFIXES = ['-wal', '-shm'];
/** A damaged file is renamed to `<file>.corrupt-<time>` (kept for inspection; `cache clear` removes it). */
const CORRUPT_MARK = '.corrupt-';

/** What happened when the file was opened: created afresh, or found damaged and replaced. */
export type SqliteOpenEvent =
  | { kind: 'created'; path: string }
  | { kind: 'replaced-corrupt'; path: string; movedTo: string; reason: string };

/** Opens the database and checks it is sound; throws on a damaged file. */
function openChecked(path: string): Database.Database {
  const database = new Database(path);
  try {
    // WAL lets several local server processes read while one writes.
    database.pragma('journal_mode = WAL');
    database.exec(
      'CREATE TABLE IF NOT EXISTS results (input_hash TEXT PRIMARY KEY, result_json TEXT NOT NULL, stored_at INTEGER NOT NULL)',
    );
    // quick_check reads every page's structure (not the index contents): a truncated or overwritten file fails it.
    const verdict = database.pragma('quick_check', { simple: true });
    if (verdict !== 'ok') throw new Error(`quick_check: ${String(verdict)}`);
    return database;
  } catch (error) {
    database.close();
    throw error;
  }
}

/** Moves the file and its WAL companions to `<file>.corrupt-<time>[-wal|-shm]`. */
function moveAside(path: string): string {
  const movedTo = `${path}${CORRUPT_MARK}${new Date().toISOString().replace(/[:.]/g, '-')}`;
  renameSync(path, movedTo);
  for (const suffix of COMPANION_SUFFIXES) {
    if (existsSync(path + suffix)) renameSync(path + suffix, movedTo + suffix);
  }
  return movedTo;
}

export class SqliteCacheLayer implements CacheLayer {
  readonly name = 'sqlite';
  readonly trusted = false;
  private readonly database: Database.Database;
  private readonly selectStatement: Database.Statement<[string], { result_json: string }>;
  private readonly upsertStatement: Database.Statement<[string, string, number]>;
  private readonly deleteStatement: Database.Statement<[string]>;

  /**
   * `path` is the database file; its directory is created when missing. `onOpen` hears when the file was created
   * or found damaged (then it is moved aside and rebuilt empty: the cache only ever costs recomputation).
   */
  constructor(
    readonly path: string,
    onOpen: (event: SqliteOpenEvent) => void = () => {},
  ) {
    mkdirSync(dirname(path), { recursive: true });
    const created = !existsSync(path);
    let database: Database.Database;
    try {
      database = openChecked(path);
    } catch (error) {
      const movedTo = moveAside(path);
      onOpen({ kind: 'replaced-corrupt', path, movedTo, reason: (error as Error).message });
      database = openChecked(path);
    }
    if (created) onOpen({ kind: 'created', path });
    this.database = database;
    this.selectStatement = this.database.prepare('SELECT result_json FROM results WHERE input_hash = ?');
    this.upsertStatement = this.database.prepare(
      'INSERT INTO results (input_hash, result_json, stored_at) VALUES (?, ?, ?) ' +
        'ON CONFLICT(input_hash) DO UPDATE SET result_json = excluded.result_json, stored_at = excluded.stored_at',
    );
    this.deleteStatement = this.database.prepare('DELETE FROM results WHERE input_hash = ?');
  }

  static inDirectory(directory: string, onOpen?: (event: SqliteOpenEvent) => void): SqliteCacheLayer {
    return new SqliteCacheLayer(join(directory, SQLITE_FILE_NAME), onOpen);
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

  /** Stored results. */
  count(): number {
    return (this.database.prepare('SELECT COUNT(*) AS n FROM results').get() as { n: number }).n;
  }

  /** Deletes every stored result and gives the space back (safe while a server has the file open: SQLite locks). */
  clear(): number {
    const removed = this.database.prepare('DELETE FROM results').run().changes;
    this.database.pragma('wal_checkpoint(TRUNCATE)');
    this.database.exec('VACUUM');
    return removed;
  }

  async close(): Promise<void> {
    if (this.database.open) this.database.close();
  }
}

/** The cache files of a directory (the database, its WAL companions, damaged files set aside) with their sizes. */
export function cacheFiles(directory: string): { path: string; bytes: number }[] {
  if (!existsSync(directory)) return [];
  return readdirSync(directory)
    .filter((name) => name.startsWith(SQLITE_FILE_NAME))
    .map((name) => ({ path: join(directory, name), bytes: statSync(join(directory, name)).size }));
}

/** Removes the damaged files set aside in a directory; returns their paths. */
export function removeSetAside(directory: string): string[] {
  const removed = cacheFiles(directory).filter((file) => basename(file.path).includes(CORRUPT_MARK));
  for (const file of removed) rmSync(file.path, { force: true });
  return removed.map((file) => file.path);
}
