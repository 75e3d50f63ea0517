// `renyi-bound evaluate <problem.json | -> --state <matrix.json> --entropy <kind> [--alpha a]`
// (--entropy and --alpha default to the problem's fields; the rule is in src/problem/entropy-request.ts):
// the objective's value (bits) and gradient norm at a given density operator.
import type { Command } from './command-line.js';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption, printJson, readJsonInput, withInputErrors } from './io.js';

export interface EvaluateOutput {
  entropy: string;
  alpha: number | null;
  value: number;
  /** Frobenius norm of ∇F, or null where the gradient does not exist (rank-deficient state). */
  gradientNorm: number | null;
}

interface EvaluateOptions {
  state: string;
  entropy?: string;
  alpha?: string;
}

export function register(program: Command): void {
  program
    .command('evaluate')
    .description('evaluate the entropy objective and its gradient norm at a given state')
    .argument('<problem>', 'problem JSON file, or - for standard input')
    .requiredOption('--state <matrix.json>', 'density operator on H_A ⊗ H_B as a matrix JSON file')
    .option('--entropy <kind>', 'von-neumann, petz-up, petz-down or sandwiched-up (default: the problem’s entropy field)')
    .option('--alpha <a>', 'Rényi order in (1, 2] (Rényi kinds only; default: the problem’s alpha field)')
    .action(
      withInputErrors(async (problemSource: string, options: EvaluateOptions) => {
        const [{ frobeniusNorm }, { createObjective }, { densityOperatorFromJson }, { parseProblemJson }, { resolveEntropyRequest }] =
          await Promise.all([
            import('../linear-algebra/complex-matrix.js'),
            import('../objectives/index.js'),
            import('../problem/state.js'),
            import('../problem/validate.js'),
            import('../problem/entropy-request.js'),
          ]);
        const alpha = options.alpha === undefined ? undefined : parseNumberOption(options.alpha, 'alpha');
        const parsed = parseProblemJson(readJsonInput(problemSource, 'problem'));
        const problem = parsed.problem;
        const request = resolveEntropyRequest({ kind: options.entropy, alpha }, parsed.request);
        const dimension = problem.dimensionA * problem.dimensionB;
        const rho = densityOperatorFromJson(readJsonInput(options.state, 'state'), 'state', dimension);
        const { value, gradient } = createObjective(problem, request).evaluate(rho);
        const output: EvaluateOutput = {
          entropy: request.kind,
          alpha: request.kind === 'von-neumann' ? null : (request.alpha ?? null),
          value,
          gradientNorm: gradient === null ? null : frobeniusNorm(gradient),
        };
        printJson(output);
      }),
    );
}
