// Key-length sweeps over n and over one channel parameter, and their chart: key rate per round against n (log
// axis), with the asymptotic Devetak–Winter rate of each channel point as a dashed reference line.
import type { TopLevelSpec } from 'vega-lite';
import type { Problem } from '../problem/model.js';
import { asymptoticReference, keyLength, KEY_LENGTH_DEFAULTS, type KeyLengthCandidate, type KeyLengthOptions } from './key-length.js';
import { localSolver, type SingleRoundSolver } from './single-round.js';

/** One channel point of a sweep: its problem and, when a parameter is swept, the parameter's value. */
export interface SweepCase {
  label: string;
  value?: number;
  problem: Problem;
}

export interface SweepPoint {
  label: string;
  value?: number;
  rounds: number;
  keyLength: number;
  ratePerRound: number;
  alpha: number;
  asymptoticRatePerRound: number | null;
  singleRoundSolves: number;
}

/** log-spaced integers from `low` to `high` inclusive (the sweep's n axis). */
export function logSpacedRounds(low: number, high: number, count: number): number[] {
  if (count === 1) return [Math.round(low)];
  return Array.from({ length: count }, (_, k) => Math.round(10 ** (Math.log10(low) + (k * (Math.log10(high) - Math.log10(low))) / (count - 1))));
}

/**
 * Every (case, n) key length, n ascending within a case so that each n can keep the previous n's optimum; the
 * asymptotic reference is solved once per case.
 */
export async function keyLengthSweep(
  cases: SweepCase[],
  rounds: number[],
  options: Omit<KeyLengthOptions, 'rounds'>,
  solver: SingleRoundSolver = localSolver,
  onPoint?: (point: SweepPoint) => void,
): Promise<SweepPoint[]> {
  const points: SweepPoint[] = [];
  const ascending = [...rounds].sort((a, b) => a - b);
  for (const sweepCase of cases) {
    let candidate: KeyLengthCandidate | undefined;
    let asymptotic: number | null = null;
    for (const [k, n] of ascending.entries()) {
      // The previous n's optimum is a candidate, not the start: for fixed (α, f) the rate does not decrease in n, so
      // the sweep's re-optimised rates do not either (docs/finite-size.md §5); each search starts where a single
      // key length starts (measured: starting from the previous optimum's scores the ascents stall at its kink).
      const report = await keyLength(sweepCase.problem, { ...options, rounds: n, candidate, withoutAsymptotic: true }, solver);
      if (k === 0) {
        const leakagePerRound = report.errorCorrection.bits / n;
        const reference = await asymptoticReference(sweepCase.problem, leakagePerRound, solver, { gapTolerance: KEY_LENGTH_DEFAULTS.gapTolerance });
        asymptotic = reference.ratePerRound;
      }
      const scores = sweepCase.problem.branches.map((b) => report.scores[b.label]);
      candidate = { alpha: report.alpha, scores, singleRoundBound: report.singleRoundBound };
      const point: SweepPoint = {
        label: sweepCase.label,
        rounds: n,
        keyLength: report.keyLength,
        ratePerRound: report.ratePerRound,
        alpha: report.alpha,
        asymptoticRatePerRound: asymptotic,
        singleRoundSolves: report.search.singleRoundSolves,
      };
      if (sweepCase.value !== undefined) point.value = sweepCase.value;
      points.push(point);
      onPoint?.(point);
    }
  }
  return points;
}

/** The chart: one solid line per case (key rate per round), one dashed line per case at its asymptotic rate. */
export function sweepPlotSpec(points: SweepPoint[], title: string): TopLevelSpec {
  const rows = points.flatMap((p) => {
    const out = [{ rounds: p.rounds, rate: p.ratePerRound, series: p.label, kind: 'finite n' }];
    if (p.asymptoticRatePerRound !== null) out.push({ rounds: p.rounds, rate: p.asymptoticRatePerRound, series: p.label, kind: 'asymptotic (Devetak–Winter)' });
    return out;
  });
  return {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title,
    width: 560,
    height: 320,
    data: { values: rows },
    mark: { type: 'line', point: true },
    encoding: {
      x: { field: 'rounds', type: 'quantitative', scale: { type: 'log' }, title: 'rounds n', axis: { format: '.0e' } },
      y: { field: 'rate', type: 'quantitative', title: 'key rate per round (bits)' },
      color: { field: 'series', type: 'nominal', title: null },
      strokeDash: { field: 'kind', type: 'nominal', title: null },
    },
  };
}

/**
 * The test probability γ that maximises the key length for n rounds (the optional γ optimisation): golden-
 * section search on log10 γ over [1e−4, 0.5] (the rate is small at both ends: too few tests cost window width,
 * too many cost key rounds), each point a full key-length search on the problem built for that γ.
 */
export async function optimiseTestProbability(
  build: (gamma: number) => Problem,
  options: KeyLengthOptions,
  solver: SingleRoundSolver = localSolver,
): Promise<{ testProbability: number; report: Awaited<ReturnType<typeof keyLength>> }> {
  const solved = new Map<number, Awaited<ReturnType<typeof keyLength>>>();
  const at = async (x: number) => {
    const known = solved.get(x);
    if (known) return known;
    const report = await keyLength(build(10 ** x), { ...options, withoutAsymptotic: true }, solver);
    solved.set(x, report);
    return report;
  };
  let a = -4;
  let b = Math.log10(0.5);
  const ratio = (Math.sqrt(5) - 1) / 2;
  let c = b - ratio * (b - a);
  let d = a + ratio * (b - a);
  let rc = (await at(c)).ratePerRound;
  let rd = (await at(d)).ratePerRound;
  while (b - a > 0.1) {
    if (rc >= rd) {
      b = d;
      d = c;
      rd = rc;
      c = b - ratio * (b - a);
      rc = (await at(c)).ratePerRound;
    } else {
      a = c;
      c = d;
      rc = rd;
      d = a + ratio * (b - a);
      rd = (await at(d)).ratePerRound;
    }
  }
  let best = -4;
  for (const [x, report] of solved) if (report.ratePerRound > (solved.get(best)?.ratePerRound ?? -Infinity)) best = x;
  const gamma = 10 ** best;
  return { testProbability: gamma, report: await keyLength(build(gamma), options, solver) };
}
