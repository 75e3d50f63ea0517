// `renyi-bound evaluate <problem.json | -> --state <matrix.json> --entropy <kind> [--alpha a]`:
// the objective's value (bits) and gradient norm at a given density operator.
import { Command } from 'commander';
import { frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { createObjective } from '../objectives/index.js';
import { densityOperatorFromJson } from '../problem/state.js';
import { entropyRequestFrom, problemFromJson } from '../problem/validate.js';
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
  entropy: string;
  alpha?: string;
}

export function register(program: Command): void {
  program
    .command('evaluate')
    .description('evaluate the entropy objective and its gradient norm at a given state')
    .argument('<problem>', 'problem JSON file, or - for standard input')
    .requiredOption('--state <matrix.json>', 'density operator on H_A ⊗ H_B as a matrix JSON file')
    .requiredOption('--entropy <kind>', 'von-neumann, petz-up, petz-down or sandwiched-up')
    .option('--alpha <a>', 'Rényi order in (1, 2] (Rényi kinds only)')
    .action(
      withInputErrors((problemSource: string, options: EvaluateOptions) => {
        const request = entropyRequestFrom(
          options.entropy,
          options.alpha === undefined ? undefined : parseNumberOption(options.alpha, 'alpha'),
        );
        const problem = problemFromJson(readJsonInput(problemSource, 'problem'));
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
