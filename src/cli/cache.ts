// `renyi-bound cache info|clear [--cache-dir d]`: where the disk cache is, how big, and emptying it.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { Command } from './command-line.js';
import { defaultCacheDirectory, SQLITE_FILE_NAME } from '../cache/directory.js';
import type { SqliteCacheLayer } from '../cache/sqlite.js';
import { printJson, withInputErrors } from './io.js';

/** The cache directory of the options, and its database file opened when it exists (closed after `use`). */
async function withDatabase<T>(
  options: { cacheDir?: string },
  use: (directory: string, database: SqliteCacheLayer | undefined) => T,
): Promise<T> {
  const directory = options.cacheDir ?? defaultCacheDirectory();
  const path = join(directory, SQLITE_FILE_NAME);
  const { SqliteCacheLayer } = await import('../cache/sqlite.js');
  const database = existsSync(path) ? new SqliteCacheLayer(path) : undefined;
  try {
    return use(directory, database);
  } finally {
    await database?.close();
  }
}

export function register(program: Command): void {
  const cache = program.command('cache').description('the disk cache of results: where it is, its size, emptying it');
  cache
    .command('info')
    .description('print the cache directory, its files and sizes, and the number of stored results (JSON)')
    .option('--cache-dir <dir>', `cache directory (default: ${defaultCacheDirectory()})`)
    .action(
      withInputErrors(async (options: { cacheDir?: string }) => {
        const { cacheFiles } = await import('../cache/sqlite.js');
        const report = await withDatabase(options, (directory, database) => ({
          directory,
          database: join(directory, SQLITE_FILE_NAME),
          exists: database !== undefined,
          results: database?.count() ?? 0,
        }));
        const files = cacheFiles(report.directory);
        printJson({ ...report, bytes: files.reduce((n, f) => n + f.bytes, 0), files });
      }),
    );
  cache
    .command('clear')
    .description('delete every stored result (safe while a server uses the file) and damaged files set aside')
    .option('--cache-dir <dir>', `cache directory (default: ${defaultCacheDirectory()})`)
    .action(
      withInputErrors(async (options: { cacheDir?: string }) => {
        const { cacheFiles, removeSetAside } = await import('../cache/sqlite.js');
        const { directory, cleared } = await withDatabase(options, (directory, database) => ({ directory, cleared: database?.clear() ?? 0 }));
        const removed = removeSetAside(directory);
        printJson({ directory, cleared, removed, bytes: cacheFiles(directory).reduce((n, f) => n + f.bytes, 0) });
      }),
    );
}
