// Option parsing shared by the service commands (serve, sweep, health, solve, assemble, demo).
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { defaultCacheDirectory, SQLITE_FILE_NAME } from '../cache/directory.js';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption } from './io.js';

/** A non-negative integer option within [minimum, maximum]; `field` names the option in errors. */
export function integerOption(text: string | undefined, field: string, minimum: number, maximum: number): number | undefined {
  if (text === undefined) return undefined;
  const value = parseNumberOption(text, field);
  if (!Number.isInteger(value) || value < minimum || value > maximum) {
    throw new ValidationError(field, `must be an integer in [${minimum}, ${maximum}] (got ${text})`);
  }
  return value;
}

/** Largest thread count accepted on the command line (more than the cores only adds contention). */
export const MAX_WORKERS = 4 * availableParallelism() + 4;

/** Help text of --server on every client command. */
export const SERVER_OPTION_HELP =
  'host:port, a comma-separated list of them, or a DNS name resolving to every replica (dns:///name:port); calls are spread round robin';

/**
 * `--server`: host:port, a comma-separated list, or a DNS name (checked here, resolved when connecting). The
 * parser is loaded only then: it brings in the DNS and network modules, which commands run locally never need.
 */
export async function serversOption(text: string, field = '--server'): Promise<string> {
  const { parseServers } = await import('../client/servers.js');
  parseServers(text, field);
  return text.trim();
}

/** Largest message size on the command line, in MiB. */
export const MAX_MESSAGE_MIB = 2048;

/** `--max-message-mib` in bytes (undefined: the default, derived from the maximum problem dimension). */
export function messageBytesOption(text: string | undefined): number | undefined {
  const mebibytes = text === undefined ? undefined : parseNumberOption(text, '--max-message-mib');
  if (mebibytes === undefined) return undefined;
  if (mebibytes < 1 || mebibytes > MAX_MESSAGE_MIB) throw new ValidationError('--max-message-mib', `must be in [1, ${MAX_MESSAGE_MIB}] (got ${text})`);
  return Math.round(mebibytes * 2 ** 20);
}

/**
 * Says where the disk cache was created, when this run creates it (the file would otherwise appear in the home
 * directory without a word). Call before starting an embedded server; call the returned function afterwards.
 */
export function noticeNewCacheFile(cacheDirectory: string | false | undefined): () => void {
  if (cacheDirectory === false) return () => {};
  const path = join(cacheDirectory ?? defaultCacheDirectory(), SQLITE_FILE_NAME);
  const existed = existsSync(path);
  return () => {
    if (!existed && existsSync(path)) {
      process.stderr.write(`renyi-bound: created the result cache ${path} (renyi-bound cache info | cache clear)\n`);
    }
  };
}
