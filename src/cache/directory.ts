// Where the disk cache lives (kept apart from the SQLite code so that commands can name it without loading it).
import { homedir } from 'node:os';
import { join } from 'node:path';

/** File name of the result database inside the cache directory. */
export const SQLITE_FILE_NAME = 'results.sqlite';

/** $XDG_CACHE_HOME/renyi-bound, else ~/.cache/renyi-bound (the XDG base-directory convention). */
export function defaultCacheDirectory(env: NodeJS.ProcessEnv = process.env): string {
  const base = env.XDG_CACHE_HOME && env.XDG_CACHE_HOME.length > 0 ? env.XDG_CACHE_HOME : join(homedir(), '.cache');
  return join(base, 'renyi-bound');
}
