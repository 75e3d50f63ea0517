// `renyi-bound solve <problem.json | -> --entropy <kind> [--alpha a] [--gap g] [--max-iterations n]
//  [--time-limit-ms t] [--warm-start matrix.json] [--server servers]`: a certified bound as JSON.
import type { Command } from './command-line.js';
import type { SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption, printJson, readJsonInput, withInputErrors } from './io.js';
import { SERVER_OPTION_HELP, serversOption } from './service-options.js';
import { addClientSecurityOptions, type SecurityCommandOptions } from './security-options.js';

/** Attempts of a remote solve whose replica fails (the next attempt goes to the next replica). */
const REMOTE_ATTEMPTS = 3;

/** Exit codes by status: a limit is a result (0); infeasible data and numerical failure have their own codes. */
export const EXIT_CODES: Record<SolveResult['status'], number> = {
  CERTIFIED: 0,
  LIMIT_REACHED: 0,
  INFEASIBLE: 2,
  NUMERICAL_ERROR: 3,
  FEASIBILITY_UNDECIDED: 4,
};

interface SolveOptions extends SecurityCommandOptions {
  entropy?: string;
  alpha?: string;
  gap?: string;
  maxIterations?: string;
  timeLimitMs?: string;
  warmStart?: string;
  server?: string;
}

function settingsFrom(options: SolveOptions): Partial<SolverSettings> {
  const settings: Partial<SolverSettings> = {};
  if (options.gap !== undefined) settings.gapTolerance = parseNumberOption(options.gap, 'gap');
  if (options.maxIterations !== undefined) settings.maxIterations = parseNumberOption(options.maxIterations, 'max-iterations');
  if (options.timeLimitMs !== undefined) settings.timeLimitMs = parseNumberOption(options.timeLimitMs, 'time-limit-ms');
  return settings;
}

export function register(program: Command): void {
  addClientSecurityOptions(program
    .command('solve')
    .description('certified lower bound on the entropy over every state consistent with the problem')
    .argument('<problem>', 'problem JSON file, or - for standard input')
    .option('--entropy <kind>', 'von-neumann, petz-up, petz-down or sandwiched-up (default: the problem’s entropy field)')
    .option('--alpha <a>', 'Rényi order in (1, 2] (Rényi kinds only; default: the problem’s alpha field)')
    .option('--gap <g>', 'requested certified gap in bits (default 1e-6)')
    .option('--max-iterations <n>', 'iteration limit (default 20000)')
    .option('--time-limit-ms <t>', 'time limit in milliseconds (default 120000)')
    .option('--warm-start <matrix.json>', 'density operator to start from')
    .option('--server <servers>', `send the request to running renyi-bound server(s) instead of solving here: ${SERVER_OPTION_HELP}`))
    .action(
      withInputErrors(async (problemSource: string, options: SolveOptions) => {
        const [{ parseProblemJson }, { resolveEntropyRequest }, { densityOperatorFromJson }] = await Promise.all([
          import('../problem/validate.js'),
          import('../problem/entropy-request.js'),
          import('../problem/state.js'),
        ]);
        const alpha = options.alpha === undefined ? undefined : parseNumberOption(options.alpha, 'alpha');
        const problemJson = readJsonInput(problemSource, 'problem');
        const parsed = parseProblemJson(problemJson);
        const request = resolveEntropyRequest({ kind: options.entropy, alpha }, parsed.request);
        const settings = settingsFrom(options);
        const dimension = parsed.problem.dimensionA * parsed.problem.dimensionB;
        const warmStartJson = options.warmStart === undefined ? undefined : readJsonInput(options.warmStart, 'warm-start');
        const warmStart =
          warmStartJson === undefined ? undefined : densityOperatorFromJson(warmStartJson, 'warm-start', dimension);
        let result: SolveResult;
        if (options.server !== undefined) {
          const server = await serversOption(options.server);
          const { closeClients, solveRemote } = await import('../client/client.js');
          const { commandLineError } = await import('../client/errors.js');
          const { clientSecurityFromPaths, setDefaultClientSecurity } = await import('../service/security.js');
          setDefaultClientSecurity(clientSecurityFromPaths(options));
          try {
            result = await solveRemote(
              server,
              { problem: problemJson, entropy: request.kind, alpha: request.alpha, settings, warmStart: warmStartJson as never },
              { attempts: REMOTE_ATTEMPTS },
            );
          } catch (error) {
            throw commandLineError(error, server);
          } finally {
            closeClients();
          }
        } else {
          const { solve } = await import('../frank-wolfe/solve.js');
          const { SettingsError } = await import('../frank-wolfe/settings.js');
          try {
            result = solve(parsed.problem, request, settings, { warmStart });
          } catch (error) {
            if (error instanceof SettingsError) throw new ValidationError(error.field.replace(/^settings\./, ''), error.reason);
            throw error;
          }
        }
        printJson(result);
        process.exitCode = EXIT_CODES[result.status];
      }),
    );
}
