// `renyi-bound health --server <servers> [--wait <seconds>]`: prints the grpc.health.v1 status name; exit 0 only
// when SERVING. With a list, one line per server (`host:port STATUS`), exit 0 only when all serve.
import type { Command } from './command-line.js';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption, withInputErrors } from './io.js';
import { integerOption, SERVER_OPTION_HELP, serversOption } from './service-options.js';
import { addClientSecurityOptions, type SecurityCommandOptions } from './security-options.js';

/** Exit code when the server answers but is not serving, or cannot be reached. */
export const EXIT_NOT_SERVING = 1;
/** Longest --wait accepted, in seconds. */
const MAX_WAIT_SECONDS = 3600;

interface HealthOptions extends SecurityCommandOptions {
  server: string;
  service: string;
  timeoutMs: string;
  wait?: string;
}

export function register(program: Command): void {
  addClientSecurityOptions(program
    .command('health')
    .description('ask a server for its health status (SERVING, NOT_SERVING, ...); exit 0 only when serving')
    .option('--server <servers>', SERVER_OPTION_HELP, '127.0.0.1:50051')
    .option('--service <name>', 'service to ask about; empty means the server as a whole', '')
    .option('--timeout-ms <ms>', 'give up on one check after this long', '3000')
    .option('--wait <seconds>', 'keep asking until the server says SERVING or this many seconds pass (a server still starting)'))
    .action(
      withInputErrors(async (options: HealthOptions) => {
        const { checkHealthOf, waitForServing } = await import('../client/client.js');
        const { parseServers } = await import('../client/servers.js');
        const { clientSecurityFromPaths, setDefaultClientSecurity } = await import('../service/security.js');
        setDefaultClientSecurity(clientSecurityFromPaths(options));
        const servers = await serversOption(options.server);
        const timeoutMs = integerOption(options.timeoutMs, '--timeout-ms', 1, 600_000)!;
        const waitSeconds = options.wait === undefined ? undefined : parseNumberOption(options.wait, '--wait');
        if (waitSeconds !== undefined && !(waitSeconds >= 0 && waitSeconds <= MAX_WAIT_SECONDS)) {
          throw new ValidationError('--wait', `must be in [0, ${MAX_WAIT_SECONDS}] seconds (got ${options.wait})`);
        }
        // A list is asked server by server; a single name is asked through its balanced channel.
        const listed = parseServers(servers).entries;
        const entries = listed.length > 1 ? listed : [servers];
        let allServing = true;
        for (const server of entries) {
          const answer =
            waitSeconds === undefined
              ? await checkHealthOf(server, options.service, { deadlineMs: timeoutMs })
              : await waitForServing(server, options.service, waitSeconds * 1000, timeoutMs);
          process.stdout.write(entries.length > 1 ? `${server} ${answer.status}\n` : `${answer.status}\n`);
          if (answer.status === 'UNREACHABLE') process.stderr.write(`renyi-bound: ${server}: unreachable (${answer.reason ?? 'no answer'})\n`);
          if (answer.status !== 'SERVING') allServing = false;
        }
        process.exitCode = allServing ? 0 : EXIT_NOT_SERVING;
      }),
    );
}
