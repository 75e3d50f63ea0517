// `renyi-bound verify <result.json | -> --problem <problem.json>`: recomputes a certificate's bound from the
// problem alone (no optimisation) and says whether the claimed bound holds; for an INFEASIBLE result it re-checks
// the Farkas certificate instead.
import { Command } from 'commander';
import { verifyResult, type VerificationReport } from '../certificate/verify.js';
import type { SolveResult } from '../result/types.js';
import { ValidationError, entropyRequestFrom, problemFromJson } from '../problem/validate.js';
import { printJson, readJsonInput, withInputErrors } from './io.js';

export function register(program: Command): void {
  program
    .command('verify')
    .description('re-check the certificate of a solve result against its problem')
    .argument('<result>', 'result JSON as printed by solve, or - for standard input')
    .requiredOption('--problem <problem.json>', 'the problem the result claims to bound')
    .action(
      withInputErrors((resultSource: string, options: { problem: string }) => {
        const result = readJsonInput(resultSource, 'result') as Partial<SolveResult> | null;
        if (result === null || typeof result !== 'object') throw new ValidationError('result', 'must be a JSON object');
        if ('dimensionA' in result || 'branches' in result || 'dimension_a' in result) {
          throw new ValidationError(
            'result',
            `${resultSource} is a problem file, not a solve result: solve it first (renyi-bound solve ${resultSource} > result.json), ` +
              'then verify result.json --problem with the problem file',
          );
        }
        const problem = problemFromJson(readJsonInput(options.problem, 'problem'));
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
