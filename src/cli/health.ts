// `renyi-bound health --server host:port`: prints the grpc.health.v1 status name; exit 0 only when SERVING.
import type { Command } from 'commander';
import { withInputErrors } from './io.js';
import { integerOption, serverAddressOption } from './service-options.js';

/** Exit code when the server answers but is not serving, or cannot be reached. */
export const EXIT_NOT_SERVING = 1;

export function register(program: Command): void {
  program
    .command('health')
    .description('ask a server for its health status (SERVING, NOT_SERVING, ...); exit 0 only when serving')
    .option('--server <host:port>', 'server address', '127.0.0.1:50051')
    .option('--service <name>', 'service to ask about; empty means the server as a whole', '')
    .option('--timeout-ms <ms>', 'give up after this long', '3000')
    .action(
      withInputErrors(async (options: { server: string; service: string; timeoutMs: string }) => {
        const { checkHealth } = await import('../service/client.js');
        const status = await checkHealth(serverAddressOption(options.server), options.service, {
          deadlineMs: integerOption(options.timeoutMs, '--timeout-ms', 1, 600_000),
        });
        process.stdout.write(`${status}\n`);
        process.exitCode = status === 'SERVING' ? 0 : EXIT_NOT_SERVING;
      }),
    );
}
