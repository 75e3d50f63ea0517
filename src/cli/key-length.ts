// `renyi-bound key-length <problem.json> --rounds <n> [--epsilon-secrecy e] [--epsilon-completeness e]
//  [--ec-efficiency f] [--alpha a] [--variable-length]`: the finite-size key length under coherent attacks as JSON.
import type { Command } from 'commander';
import { parseNumberOption, printJson, readJsonInput, withInputErrors } from './io.js';

interface KeyLengthCliOptions {
  rounds: string;
  epsilonSecrecy?: string;
  epsilonCompleteness?: string;
  epsilonPrivacyAmplification?: string;
  epsilonErrorVerification?: string;
  ecEfficiency?: string;
  errorCorrectionBits?: string;
  alpha?: string;
  variableLength?: boolean;
  fast?: boolean;
}

export function register(program: Command): void {
  program
    .command('key-length')
    .description('finite-size key length under coherent attacks (Rényi entropy accumulation; docs/finite-size.md)')
    .argument('<problem>', 'problem JSON with honestStatistics (e.g. from `example … --test-probability γ`), or -')
    .requiredOption('--rounds <n>', 'number of rounds n')
    .option('--epsilon-secrecy <e>', 'security parameter ε_sec = ε_PA + ε_EV (default 1e-10, common practice)')
    .option('--epsilon-completeness <e>', 'honest abort probability bound ε_com (default 1e-2, common practice)')
    .option('--epsilon-privacy-amplification <e>', 'ε_PA (default ε_sec/2, or ε_sec − ε_EV)')
    .option('--epsilon-error-verification <e>', 'ε_EV (default ε_sec/2, or ε_sec − ε_PA)')
    .option('--ec-efficiency <f>', 'error-correction efficiency f_EC ≥ 1 (default 1.16, common practice)')
    .option('--error-correction-bits <bits>', 'λ_EC given directly instead of f_EC·n·H(S|B)')
    .option('--alpha <a>', 'fixed Rényi order in (1, 2] (default: optimised)')
    .option('--variable-length', 'also return the affine rule ℓ(observed score sum)')
    .option('--fast', 'Petz-up single-round bound (faster, lower) instead of sandwiched-up')
    .action(
      withInputErrors(async (problemSource: string, options: KeyLengthCliOptions) => {
        const number = (text: string | undefined, field: string) => (text === undefined ? undefined : parseNumberOption(text, field));
        const { parseProblemJson } = await import('../problem/validate.js');
        const { keyLength } = await import('../finite-size/key-length.js');
        const problem = parseProblemJson(readJsonInput(problemSource, 'problem')).problem;
        const report = await keyLength(problem, {
          rounds: number(options.rounds, 'rounds') as number,
          epsilonSecrecy: number(options.epsilonSecrecy, 'epsilon-secrecy'),
          epsilonCompleteness: number(options.epsilonCompleteness, 'epsilon-completeness'),
          epsilonPrivacyAmplification: number(options.epsilonPrivacyAmplification, 'epsilon-privacy-amplification'),
          epsilonErrorVerification: number(options.epsilonErrorVerification, 'epsilon-error-verification'),
          ecEfficiency: number(options.ecEfficiency, 'ec-efficiency'),
          errorCorrectionBits: number(options.errorCorrectionBits, 'error-correction-bits'),
          alpha: number(options.alpha, 'alpha'),
          variableLength: options.variableLength === true,
          entropy: options.fast ? 'petz-up' : 'sandwiched-up',
        });
        printJson(report);
      }),
    );
}
