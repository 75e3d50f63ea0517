// Benchmarks of decoy-state BB84: LP bounds per point, the single-photon solve, a distance sweep, the channel fit,
// the whole `decoy-rate` command in a fresh process, and the 200-trial interval-coverage study of the fit.
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import type { Highs } from 'highs';
import { basisBounds, lpSolver } from '../decoy/bounds.js';
import { binaryEntropy } from '../decoy/channel.js';
import type { EntropyRequest } from '../problem/model.js';
import { FITTED_PARAMETERS } from '../decoy/counts.js';
import { fitChannel } from '../decoy/fit.js';
import { analyseDecoy, simulatedObservations, type DecoyProtocol } from '../decoy/key-rate.js';
import { simulateCounts, type SimulationPlan } from '../decoy/simulate.js';
import { sweepDistance } from '../decoy/sweep.js';
import { packageRoot } from '../problem/proto-options.js';
import type { BenchTable } from './inputs.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004). */
const CHANNEL = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };
const PROTOCOL: DecoyProtocol = { signal: 0.48, decoys: [0.1, 0], zBasisProbability: 0.5, ecEfficiency: 1.22 };
const PLAN: SimulationPlan = { signal: 0.5, decoys: [0.1, 0], zBasisProbability: 0.5, distancesKm: [10, 40, 80], pulses: 1e10 };

/** splitmix32-based uniform source (seeded, reproducible). */
function seeded(seed: number): () => number {
  let state = seed | 0;
  const next = () => {
    state = (state + 0x9e3779b9) | 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 16), 0x21f0aaad);
    z = Math.imul(z ^ (z >>> 15), 0x735a2d97);
    return (z ^ (z >>> 15)) >>> 0;
  };
  return () => ((next() >>> 5) * 67108864 + (next() >>> 6)) / 9007199254740992;
}

function median(times: number[]): number {
  const sorted = [...times].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function timed(repeats: number, work: () => void): number {
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    work();
    times.push(performance.now() - start);
  }
  return median(times);
}

const ms = (x: number) => Number(x.toPrecision(3));

/**
 * The single-photon bound per key-branch weight against Shor–Preskill's 1 − h(e₁ᵁ) along the GYS link: the target
 * is CERTIFIED within 1e-6 at every distance (von Neumann); a Rényi kind is shown for its status and time.
 */
function singlePhotonAccuracy(highs: Highs): BenchTable {
  const rows: (string | number)[][] = [];
  const cases: [number, EntropyRequest][] = [0, 25, 50, 75, 100, 140].map((d) => [d, { kind: 'von-neumann' }]);
  cases.push([25, { kind: 'petz-up', alpha: 1.5 }], [100, { kind: 'petz-up', alpha: 1.5 }], [100, { kind: 'petz-down', alpha: 1.5 }]);
  cases.push([25, { kind: 'sandwiched-up', alpha: 1.5 }], [100, { kind: 'sandwiched-up', alpha: 1.5 }]);
  for (const [distanceKm, entropy] of cases) {
    const observations = simulatedObservations({ distanceKm, ...CHANNEL }, PROTOCOL);
    const start = performance.now();
    const result = analyseDecoy(highs, PROTOCOL, observations, { entropy });
    const elapsed = performance.now() - start;
    const pz = PROTOCOL.zBasisProbability;
    const y = Math.max(result.bases.Z.yieldLower, result.bases.X.yieldLower);
    const analytic = 1 - binaryEntropy(result.bases.X.errorYieldUpper / y);
    const deviation = result.singlePhotonBound === null ? null : analytic - result.singlePhotonBound / (pz * pz * y);
    const vonNeumann = entropy.kind === 'von-neumann';
    rows.push([
      distanceKm,
      vonNeumann ? 'von Neumann' : `${entropy.kind} α = ${entropy.alpha}`,
      result.singlePhotonScale,
      `${result.singlePhoton.status}${result.singlePhoton.limit ? ` (${result.singlePhoton.limit})` : ''}`,
      result.singlePhoton.iterations,
      ms(elapsed),
      deviation === null || !vonNeumann ? '—' : Number(deviation.toPrecision(2)),
      result.singlePhotonUpperBound === null ? '—' : Number(((result.singlePhotonUpperBound - result.singlePhotonBound!) / result.singlePhotonBound!).toPrecision(2)),
      vonNeumann ? (result.singlePhoton.status === 'CERTIFIED' && deviation !== null && deviation < 1e-6 ? 'met' : 'missed') : '(no analytic value)',
    ]);
  }
  return {
    title: 'Single-photon bound per key-branch weight vs 1 − h(e₁ᵁ) (Shor–Preskill), GYS link, μ = 0.48, ν = 0.1, 0; target CERTIFIED within 1e-6',
    columns: ['km', 'entropy', 'yield scale s', 'status', 'iterations', 'ms', '(1 − h) − bound/weight', '(upper − bound) / bound', 'target'],
    rows,
  };
}

export async function benchDecoy(): Promise<BenchTable[]> {
  const highs = await lpSolver();
  const at = (distanceKm: number) => simulatedObservations({ distanceKm, ...CHANNEL }, PROTOCOL);
  const rows: (string | number)[][] = [];
  for (const distanceKm of [25, 100]) {
    rows.push([`LP bounds, both bases (8 certified LPs), ${distanceKm} km`, ms(timed(9, () => void [basisBounds(highs, 'Z', at(distanceKm).Z), basisBounds(highs, 'X', at(distanceKm).X)]))]);
  }
  for (const distanceKm of [0, 25, 100]) {
    let status = '';
    const t = timed(3, () => void (status = analyseDecoy(highs, PROTOCOL, at(distanceKm)).singlePhoton.status));
    rows.push([`whole point with single-photon solve (von Neumann), ${distanceKm} km (${status})`, ms(t)]);
  }
  rows.push(['distance sweep 0–120 km, 7 points', ms(timed(1, () => void sweepDistance(highs, CHANNEL, PROTOCOL, [0, 20, 40, 60, 80, 100, 120])))]);
  const counts = simulateCounts(CHANNEL, PLAN, seeded(7));
  rows.push(['channel fit, 3 sessions × 12 data points', ms(timed(9, () => void fitChannel(counts)))]);
  const cli = join(packageRoot(), 'dist', 'cli', 'main.js');
  rows.push([
    'fresh process: `renyi-bound decoy-rate --distance-km 25` (node dist/)',
    ms(timed(3, () => void execFileSync(process.execPath, [cli, 'decoy-rate', '--distance-km', '25'], { stdio: 'ignore' }))),
  ]);
  const timing: BenchTable = { title: 'Decoy-state BB84 (median ms, warm process unless stated)', columns: ['task', 'ms'], rows };

  // Coverage of the fit's 95 % intervals on 200 seeded binomial data sets.
  const uniform = seeded(2026);
  const covered = Object.fromEntries(FITTED_PARAMETERS.map((p) => [p, 0])) as Record<(typeof FITTED_PARAMETERS)[number], number>;
  const trials = 200;
  for (let t = 0; t < trials; t++) {
    const fit = fitChannel(simulateCounts(CHANNEL, PLAN, uniform));
    for (const p of FITTED_PARAMETERS) {
      const [low, high] = fit.parameters[p].interval95;
      if (low <= CHANNEL[p] && CHANNEL[p] <= high) covered[p]++;
    }
  }
  const coverage: BenchTable = {
    title: `Fit: coverage of the 95 % intervals over ${trials} seeded noisy data sets (10¹⁰ pulses per cell)`,
    columns: ['parameter', 'covered', 'rate'],
    rows: FITTED_PARAMETERS.map((p) => [p, covered[p], `${((100 * covered[p]) / trials).toFixed(1)} %`]),
  };
  return [timing, singlePhotonAccuracy(highs), coverage];
}
