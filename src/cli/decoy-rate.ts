// `renyi-bound decoy-rate`: asymptotic key rate per pulse of decoy-state BB84 with weak coherent pulses, from
// channel parameters or measured counts; optionally a channel fit and a sweep over distance drawn as SVG.
import { writeFileSync } from 'node:fs';
import type { Command } from './command-line.js';
import { ValidationError } from '../problem/errors.js';
import { parseNumberOption, printJson, readJsonInput, withInputErrors } from './io.js';

interface DecoyRateOptions {
  distanceKm: string;
  fiberLossDbPerKm: string;
  detectorEfficiency: string;
  darkCountYield: string;
  misalignment: string;
  ecEfficiency: string;
  signal: string;
  decoys: string;
  zBasisProbability: string;
  counts?: string;
  session?: string;
  fit?: boolean;
  sweepDistance?: string;
  plot?: string;
  entropy?: string;
  alpha?: string;
  cutoff?: string;
  timeLimitMs?: string;
}

export function register(program: Command): void {
  program
    .command('decoy-rate')
    .description('asymptotic key rate per pulse of decoy-state BB84 (weak coherent pulses) from a channel model or measured counts')
    .option('--distance-km <km>', 'fibre length', '50')
    .option('--fiber-loss-db-per-km <dB>', 'fibre attenuation', '0.21')
    .option('--detector-efficiency <eta>', "Bob's detection efficiency", '0.045')
    .option('--dark-count-yield <Y0>', 'click probability per pulse without signal', '1.7e-6')
    .option('--misalignment <e>', 'probability that an arriving photon gives the wrong bit', '0.033')
    .option('--ec-efficiency <f>', 'error-correction inefficiency (leakage f·h(E))', '1.22')
    .option('--signal <mu>', 'signal mean photon number', '0.48')
    .option('--decoys <list>', 'decoy mean photon numbers ν1,ν2,… (0 is the vacuum decoy)', '0.1,0')
    .option('--z-basis-probability <p>', 'probability of the Z (key) basis for both parties', '0.5')
    .option('--counts <measured.json>', 'measured counts (docs/decoy.md); intensities and basis choice come from the file')
    .option('--session <index>', 'which session of --counts to analyse (when it holds several)')
    .option('--fit', 'fit the channel model to --counts and report parameters with uncertainties')
    .option('--sweep-distance <from:to:step>', 'key rate over distance (with --fit: from the fitted model, with a 95 % band)')
    .option('--plot <file.svg>', 'draw the sweep: key rate per pulse against distance, log axis')
    .option('--entropy <kind>', 'entropy of the single-photon bound: von-neumann (default), petz-up, petz-down, sandwiched-up')
    .option('--alpha <a>', 'Rényi order in (1, 2] (Rényi kinds only)')
    .option('--cutoff <n>', 'photon-number cut-off of the LP (the tail above is bounded exactly)', '12')
    .option('--time-limit-ms <t>', 'time limit of each single-photon solve', '20000')
    .action(
      withInputErrors(async (options: DecoyRateOptions, command: Command) => {
        if (options.counts !== undefined) {
          // The counts file states the intensities and basis choice it was measured with.
          for (const name of ['signal', 'decoys', 'zBasisProbability'] as const) {
            if (command.isGiven(name)) {
              throw new ValidationError(name === 'zBasisProbability' ? 'z-basis-probability' : name, 'is taken from the --counts file; do not give both');
            }
          }
        }
        const number = (text: string, field: string) => parseNumberOption(text, field);
        const { entropyRequestFrom } = await import('../problem/entropy-request.js');
        const { readMeasuredCounts } = await import('../decoy/counts.js');
        const { distanceGrid, sweepChartSpec } = await import('../decoy/sweep.js');
        const { decoyRate } = await import('../decoy/request.js');
        const { lpSolver } = await import('../decoy/bounds.js');
        const cutoff = number(options.cutoff ?? '12', 'cutoff');
        if (!(Number.isInteger(cutoff) && cutoff >= 2 && cutoff <= 60)) throw new ValidationError('cutoff', `must be an integer in [2, 60] (got ${cutoff})`);
        if (options.plot !== undefined && options.sweepDistance === undefined) throw new ValidationError('plot', 'needs --sweep-distance');
        const alpha = options.alpha === undefined ? undefined : number(options.alpha, 'alpha');
        if (options.entropy === undefined && alpha !== undefined) throw new ValidationError('alpha', 'given without --entropy');
        const answer = decoyRate(await lpSolver(), {
          channel: {
            distanceKm: number(options.distanceKm, 'distance-km'),
            fiberLossDbPerKm: number(options.fiberLossDbPerKm, 'fiber-loss-db-per-km'),
            detectorEfficiency: number(options.detectorEfficiency, 'detector-efficiency'),
            darkCountYield: number(options.darkCountYield, 'dark-count-yield'),
            misalignment: number(options.misalignment, 'misalignment'),
          },
          protocol: {
            signal: number(options.signal, 'signal'),
            decoys: options.decoys.split(',').map((d, i) => number(d, `decoys[${i}]`)),
            zBasisProbability: number(options.zBasisProbability, 'z-basis-probability'),
            ecEfficiency: number(options.ecEfficiency, 'ec-efficiency'),
          },
          counts: options.counts === undefined ? undefined : readMeasuredCounts(readJsonInput(options.counts, 'counts'), 'counts'),
          session: options.session === undefined ? undefined : number(options.session, 'session'),
          fit: options.fit === true,
          sweepDistancesKm:
            options.sweepDistance === undefined
              ? undefined
              : distanceGrid(options.sweepDistance, 'sweep-distance', (field, reason) => new ValidationError(field, reason)),
          entropy: options.entropy === undefined ? undefined : entropyRequestFrom(options.entropy, alpha),
          cutoff,
          settings: { timeLimitMs: number(options.timeLimitMs ?? '20000', 'time-limit-ms') },
        });
        if (options.plot !== undefined && answer.sweep !== undefined) {
          const { renderSvg } = await import('../client/report.js');
          const title = answer.source === 'fit' ? 'Decoy-state BB84 from the fitted channel (band: 95 %)' : 'Decoy-state BB84 key rate';
          writeFileSync(options.plot, await renderSvg(sweepChartSpec(answer.sweep, title)));
        }
        printJson(answer);
      }),
    );
}
