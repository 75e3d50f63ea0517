// `renyi-bound verify <result.json | -> --problem <problem.json> [--server servers]`: recomputes a certificate's bound
// from the problem alone (no optimisation) and says whether every stated number holds; for an INFEASIBLE result it
// re-checks the Farkas certificate instead. With --server the check runs on a server (the Verify RPC).
import type { Command } from './command-line.js';
import type { VerificationReport } from '../certificate/verify.js';
import type { SolveResult } from '../result/types.js';
import { ValidationError } from '../problem/errors.js';
import { printJson, readJsonInput, withInputErrors } from './io.js';
import { SERVER_OPTION_HELP, serversOption } from './service-options.js';
import { addClientSecurityOptions, type SecurityCommandOptions } from './security-options.js';

export function register(program: Command): void {
  addClientSecurityOptions(program
    .command('verify')
    .description('re-check the certificate of a solve result against its problem, or a decoy-rate answer on its own')
    .argument('<result>', 'result JSON as printed by solve (or by decoy-rate), or - for standard input')
    .option('--problem <problem.json>', 'the problem the result claims to bound (not for a decoy-rate answer)')
    .option('--server <servers>', `re-check on running renyi-bound server(s) instead of here: ${SERVER_OPTION_HELP}`))
    .action(
      withInputErrors(async (resultSource: string, options: { problem?: string; server?: string } & SecurityCommandOptions) => {
        // Loaded together: the loader reads the files of all three graphs at once instead of one graph after another.
        const [{ verifyResult }, { problemFromJson }, { entropyRequestFrom }] = await Promise.all([
          import('../certificate/verify.js'),
          import('../problem/validate.js'),
          import('../problem/entropy-request.js'),
        ]);
        const result = readJsonInput(resultSource, 'result') as Partial<SolveResult> | null;
        if (result === null || typeof result !== 'object') throw new ValidationError('result', 'must be a JSON object');
        if ('dimensionA' in result || 'branches' in result || 'dimension_a' in result) {
          throw new ValidationError(
            'result',
            `${resultSource} is a problem file, not a solve result: solve it first (renyi-bound solve ${resultSource} > result.json), ` +
              'then verify result.json --problem with the problem file',
          );
        }
        // A decoy-rate answer carries its LP certificates and its single-photon problem (docs/decoy.md).
        if ('singlePhoton' in result && options.problem === undefined && options.server === undefined) {
          const report = (await import('../decoy/verify-rate.js')).verifyDecoyRate(result);
          printJson(report);
          process.exitCode = report.valid ? 0 : 1;
          return;
        }
        if (options.problem === undefined) throw new ValidationError('problem', 'is required to verify a solve result (--problem <problem.json>)');
        const problemJson = readJsonInput(options.problem, 'problem');
        if (options.server !== undefined) {
          printJson(await verifyOnServer(await serversOption(options.server), problemJson, result as SolveResult, options));
          return;
        }
        const problem = problemFromJson(problemJson);
        let report: VerificationReport;
        try {
          const request =
            result.status === 'INFEASIBLE' ? { kind: 'von-neumann' as const } : entropyRequestFrom(String(result.entropy), result.alpha ?? undefined);
          report = verifyResult(problem, request, {
            ...result,
            certificate: result.certificate ?? null,
            certifiedLowerBound: result.certifiedLowerBound ?? null,
            inputHash: String(result.inputHash),
          });
        } catch (error) {
          // A malformed certificate is an invalid certificate, reported as such.
          report = { valid: false, certifiedLowerBound: null, reason: (error as Error).message };
        }
        printJson(report);
        process.exitCode = report.valid ? 0 : 1;
      }),
    );
}

/** The Verify RPC: the same checks, run by the server; a server that cannot be reached is one line, exit 1. */
async function verifyOnServer(server: string, problem: unknown, result: SolveResult, options: SecurityCommandOptions) {
  const { closeClients, verifyRemote } = await import('../client/client.js');
  const { commandLineError } = await import('../client/errors.js');
  const { clientSecurityFromPaths, setDefaultClientSecurity } = await import('../service/security.js');
  setDefaultClientSecurity(clientSecurityFromPaths(options));
  try {
    const report = await verifyRemote(server, { problem, entropy: result.entropy, alpha: result.alpha ?? undefined, result });
    process.exitCode = report.valid ? 0 : 1;
    return report;
  } catch (error) {
    throw commandLineError(error, server);
  } finally {
    closeClients();
  }
}
