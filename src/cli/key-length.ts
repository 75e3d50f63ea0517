// `renyi-bound key-length <problem.json> --rounds <n> [--epsilon-secrecy e] [--epsilon-completeness e]
//  [--ec-efficiency f] [--alpha a] [--variable-length]`: the finite-size key length under coherent attacks as JSON.
// Sweep mode: several n (`--rounds 1e4..1e12:9` or a comma list) and optionally one channel parameter of an
// example (`--example bb84-entangled --set test-probability=0.02 --sweep qber-x=0.01,0.03`), drawn with `--plot`.
import type { Command } from './command-line.js';
import { ValidationError } from '../problem/errors.js';
import type { KeyLengthOptions } from '../finite-size/key-length.js';
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
  example?: string;
  set: string[];
  sweep?: string;
  plot?: string;
  diskCache: boolean;
  cacheDir?: string;
  optimiseTestProbability?: boolean;
}

/** `1e6`, `1e4,1e6,1e8` or `1e4..1e12:9` (log-spaced). */
function roundsList(text: string, logSpaced: (low: number, high: number, count: number) => number[]): number[] {
  const range = /^([^.]+)\.\.([^:]+):(\d+)$/.exec(text.trim());
  if (range) {
    const count = Number(range[3]);
    if (count < 1) throw new ValidationError('rounds', `needs at least one point (got ${count})`);
    return logSpaced(parseNumberOption(range[1], 'rounds'), parseNumberOption(range[2], 'rounds'), count);
  }
  return text.split(',').map((part) => parseNumberOption(part.trim(), 'rounds'));
}

/** `name=value` (for --set) or `name=v1,v2,…` (for --sweep). */
function assignment(text: string, field: string): { name: string; values: number[] } {
  const match = /^([a-z][a-z0-9-]*)=(.+)$/.exec(text.trim());
  if (!match) throw new ValidationError(field, `must look like name=value (got ${JSON.stringify(text)})`);
  return { name: match[1], values: match[2].split(',').map((v) => parseNumberOption(v.trim(), `${field} ${match[1]}`)) };
}

export function register(program: Command): void {
  program
    .command('key-length')
    .description('finite-size key length under coherent attacks (Rényi entropy accumulation; docs/finite-size.md)')
    .argument('[problem]', 'problem JSON with honestStatistics (e.g. from `example … --test-probability γ`), or -')
    .requiredOption('--rounds <n>', 'number of rounds n; several for a sweep: 1e4,1e6,1e8 or 1e4..1e12:9 (log-spaced)')
    .option('--epsilon-secrecy <e>', 'security parameter ε_sec = ε_PA + ε_EV (default 1e-10, common practice)')
    .option('--epsilon-completeness <e>', 'honest abort probability bound ε_com (default 1e-2, common practice)')
    .option('--epsilon-privacy-amplification <e>', 'ε_PA (default ε_sec/2, or ε_sec − ε_EV)')
    .option('--epsilon-error-verification <e>', 'ε_EV (default ε_sec/2, or ε_sec − ε_PA)')
    .option('--ec-efficiency <f>', 'error-correction efficiency f_EC ≥ 1 (default 1.16, common practice)')
    .option('--error-correction-bits <bits>', 'λ_EC given directly instead of f_EC·n·H(S|B)')
    .option('--alpha <a>', 'fixed Rényi order in (1, 2] (default: optimised)')
    .option('--variable-length', 'also return the affine rule ℓ(observed score sum)')
    .option('--fast', 'Petz-up single-round bound (faster, lower) instead of sandwiched-up')
    .option('--example <name>', 'build the problem from an example instead of a file (sweeps over a channel parameter)')
    .repeatableOption('--set <name=value>', 'an example parameter (repeatable)')
    .option('--sweep <name=v1,v2,…>', 'sweep one example parameter')
    .option('--plot <file.svg>', 'sweep chart: key rate per round against n, asymptotic rate dashed')
    .option('--optimise-test-probability', 'with --example and one n: search the test probability γ too')
    .option('--no-disk-cache', 'keep single-round results in memory only')
    .option('--cache-dir <dir>', 'directory of the SQLite result cache (default as for serve)')
    .action(
      withInputErrors(async (problemSource: string | undefined, options: KeyLengthCliOptions) => {
        const number = (text: string | undefined, field: string) => (text === undefined ? undefined : parseNumberOption(text, field));
        const [{ parseProblemJson }, { keyLength }, sweepModule, { cachedSolver, localResultCache }, { buildExample }] = await Promise.all([
          import('../problem/validate.js'),
          import('../finite-size/key-length.js'),
          import('../finite-size/sweep.js'),
          import('../finite-size/cached-solver.js'),
          import('../protocols/index.js'),
        ]);
        const settings: Omit<KeyLengthOptions, 'rounds'> = {
          epsilonSecrecy: number(options.epsilonSecrecy, 'epsilon-secrecy'),
          epsilonCompleteness: number(options.epsilonCompleteness, 'epsilon-completeness'),
          epsilonPrivacyAmplification: number(options.epsilonPrivacyAmplification, 'epsilon-privacy-amplification'),
          epsilonErrorVerification: number(options.epsilonErrorVerification, 'epsilon-error-verification'),
          ecEfficiency: number(options.ecEfficiency, 'ec-efficiency'),
          errorCorrectionBits: number(options.errorCorrectionBits, 'error-correction-bits'),
          alpha: number(options.alpha, 'alpha'),
          variableLength: options.variableLength === true,
          entropy: options.fast ? 'petz-up' : 'sandwiched-up',
        };
        if ((problemSource === undefined) === (options.example === undefined)) {
          throw new ValidationError('problem', 'give either a problem file or --example');
        }
        if (options.example === undefined && (options.set.length > 0 || options.sweep !== undefined)) {
          throw new ValidationError(options.sweep !== undefined ? 'sweep' : 'set', 'needs --example');
        }
        const exampleParameters: Record<string, number> = {};
        for (const text of options.set) {
          const { name, values } = assignment(text, 'set');
          if (values.length !== 1) throw new ValidationError(`set ${name}`, 'takes one value');
          exampleParameters[name] = values[0];
        }
        const swept = options.sweep === undefined ? undefined : assignment(options.sweep, 'sweep');
        const cases = problemSource !== undefined
          ? [{ label: 'problem', problem: parseProblemJson(readJsonInput(problemSource, 'problem')).problem }]
          : (swept?.values ?? [undefined]).map((value) => ({
              label: swept && value !== undefined ? `${swept.name} = ${value}` : (options.example as string),
              value,
              problem: parseProblemJson(
                buildExample(options.example as string, swept && value !== undefined ? { ...exampleParameters, [swept.name]: value } : exampleParameters),
              ).problem,
            }));
        const rounds = roundsList(options.rounds, sweepModule.logSpacedRounds);
        const cache = localResultCache(options.diskCache ? options.cacheDir : false);
        try {
          const solver = cachedSolver(cache);
          if (options.optimiseTestProbability) {
            if (options.example === undefined || rounds.length !== 1 || swept !== undefined) {
              throw new ValidationError('optimise-test-probability', 'needs --example, one --rounds value and no --sweep');
            }
            const build = (gamma: number) =>
              parseProblemJson(buildExample(options.example as string, { ...exampleParameters, 'test-probability': gamma })).problem;
            const { testProbability, report } = await sweepModule.optimiseTestProbability(build, { ...settings, rounds: rounds[0] }, solver);
            printJson({ testProbability, ...report });
            return;
          }
          if (rounds.length === 1 && cases.length === 1 && options.plot === undefined) {
            printJson(await keyLength(cases[0].problem, { ...settings, rounds: rounds[0] }, solver));
            return;
          }
          const points = await sweepModule.keyLengthSweep(cases, rounds, settings, solver, (p) =>
            process.stderr.write(`${p.label}  n = ${p.rounds.toExponential(1)}  rate ${p.ratePerRound.toFixed(6)}  α = ${p.alpha.toFixed(6)}\n`),
          );
          if (options.plot !== undefined) {
            const { writeFileSync } = await import('node:fs');
            const { renderSvg } = await import('../client/report.js');
            const title = `finite-size key rate (${options.example ?? 'problem'}${options.fast ? ', Petz-up' : ''})`;
            writeFileSync(options.plot, await renderSvg(sweepModule.sweepPlotSpec(points, title)));
          }
          printJson({ rounds, points });
        } finally {
          await cache.close();
        }
      }),
    );
}
