// `renyi-bound serve`: runs the gRPC service until SIGTERM/SIGINT, then drains and exits 0.
import type { Command } from './command-line.js';
import type { RenyiBoundServer } from '../service/server.js';
import { ValidationError } from '../problem/errors.js';
import { withInputErrors } from './io.js';
import { integerOption, MAX_WORKERS, messageBytesOption } from './service-options.js';
import { addServerSecurityOptions, type SecurityCommandOptions } from './security-options.js';

/** Largest queue accepted on the command line. */
const MAX_QUEUE_LIMIT = 1_000_000;

interface ServeOptions extends SecurityCommandOptions {
  host?: string;
  port?: string;
  workers?: string;
  cacheDir?: string;
  diskCache: boolean;
  redisUrl?: string;
  redisRequired?: boolean;
  queueLimit?: string;
  maxMessageMib?: string;
}

export function register(program: Command): void {
  addServerSecurityOptions(program
    .command('serve')
    .description('run the gRPC service (renyibound.v1.RenyiBound, grpc.health.v1.Health, server reflection)')
    .option('--host <host>', 'interface to bind (default: loopback, 127.0.0.1)')
    .option('--port <port>', 'TCP port; 0 picks a free one (default: 50051)')
    .option('--workers <n>', 'solver threads (default: the number of cores)')
    .option('--cache-dir <dir>', 'directory of the SQLite result cache (default: $XDG_CACHE_HOME/renyi-bound or ~/.cache/renyi-bound)')
    .option('--no-disk-cache', 'keep results in memory only (no SQLite file)')
    .option('--redis-url <url>', 'Redis shared between replicas, e.g. redis://127.0.0.1:6379')
    .option('--redis-required', 'refuse to start while Redis cannot be reached (default: start with the local cache, join Redis when it answers)')
    .option('--max-message-mib <n>', 'largest request accepted, in MiB (default: room for 64 dense complex matrices of the maximum dimension)')
    .option('--queue-limit <n>', 'solves allowed to wait for a thread before RESOURCE_EXHAUSTED (default: 16 per thread)'))
    .action(
      withInputErrors(async (options: ServeOptions) => {
        const { RenyiBoundServer } = await import('../service/server.js');
        const { serverSecurityFromPaths } = await import('../service/security.js');
        const settings = {
          host: options.host,
          port: integerOption(options.port, '--port', 0, 65535),
          workers: integerOption(options.workers, '--workers', 1, MAX_WORKERS),
          queueLimit: integerOption(options.queueLimit, '--queue-limit', 0, MAX_QUEUE_LIMIT),
          cacheDirectory: options.diskCache ? options.cacheDir : (false as const),
          redisUrl: options.redisUrl,
          redisRequired: options.redisRequired === true,
          maxMessageBytes: messageBytesOption(options.maxMessageMib),
          security: serverSecurityFromPaths(options),
          healthPort: integerOption(options.healthPort, '--health-port', 0, 65535),
        };
        let server: RenyiBoundServer;
        try {
          server = await RenyiBoundServer.start(settings);
        } catch (error) {
          // The usual start-up failures are bad option values: an unreachable Redis, a port in use.
          if (error instanceof ValidationError) throw error;
          const message = (error as Error).message;
          if (/Redis/.test(message)) throw new ValidationError('--redis-url', message);
          if (/bind|address|EADDRINUSE|port/i.test(message)) throw new ValidationError('--port', message);
          throw error;
        }
        const stop = (signal: string) => {
          server.logger.info({ event: 'signal', signal }, 'shutting down');
          void server.shutdown().then(() => process.exit(0));
        };
        process.once('SIGTERM', () => stop('SIGTERM'));
        process.once('SIGINT', () => stop('SIGINT'));
      }),
    );
}
