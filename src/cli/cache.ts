// `renyi-bound cache info|clear [--cache-dir d]`: where the disk cache is, how big, and emptying it.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { Command } from 'commander';
import { defaultCacheDirectory, SQLITE_FILE_NAME } from '../cache/directory.js';
import { printJson, withInputErrors } from './io.js';

export function register(program: Command): void {
  const cache = program.command('cache').description('the disk cache of results: where it is, its size, emptying it');
  cache
    .command('info')
    .description('print the cache directory, its files and sizes, and the number of stored results (JSON)')
    .option('--cache-dir <dir>', `cache directory (default: ${defaultCacheDirectory()})`)
    .action(
      withInputErrors(async (options: { cacheDir?: string }) => {
        const directory = options.cacheDir ?? defaultCacheDirectory();
        const database = join(directory, SQLITE_FILE_NAME);
        const { cacheFiles, SqliteCacheLayer } = await import('../cache/sqlite.js');
        const files = cacheFiles(directory);
        let results = 0;
        if (existsSync(database)) {
          const layer = new SqliteCacheLayer(database);
          results = layer.count();
          await layer.close();
        }
        printJson({ directory, database, exists: existsSync(database), results, bytes: files.reduce((n, f) => n + f.bytes, 0), files });
      }),
    );
  cache
    .command('clear')
    .description('delete every stored result (safe while a server uses the file) and damaged files set aside')
    .option('--cache-dir <dir>', `cache directory (default: ${defaultCacheDirectory()})`)
    .action(
      withInputErrors(async (options: { cacheDir?: string }) => {
        const directory = options.cacheDir ?? defaultCacheDirectory();
        const database = join(directory, SQLITE_FILE_NAME);
        const { cacheFiles, removeSetAside, SqliteCacheLayer } = await import('../cache/sqlite.js');
        let cleared = 0;
        if (existsSync(database)) {
          const layer = new SqliteCacheLayer(database);
          cleared = layer.clear();
          await layer.close();
        }
        const removed = removeSetAside(directory);
        printJson({ directory, cleared, removed, bytes: cacheFiles(directory).reduce((n, f) => n + f.bytes, 0) });
      }),
    );
}
