// Asymptotic key rate per signal pulse of decoy-state BB84: certified single-photon entropy from the solver,
// minus error-correction leakage on every detected signal pulse (docs/decoy.md, "Key rate").
import type { Highs } from 'highs';
import { solve } from '../frank-wolfe/solve.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import type { SolveResult } from '../result/types.js';
import type { EntropyRequest } from '../problem/model.js';
import { problemFromJson } from '../problem/validate.js';
import { BASES, basisBounds, DEFAULT_CUTOFF, type Basis, type BasisBounds, type IntensityObservation } from './bounds.js';
import { binaryEntropy, expectedGain, photonYield, type ChannelParameters } from './channel.js';
import { analyticSinglePhoton, leakageOf, ratePerPulse, signalObservation, singlePhotonFraction } from './rate-terms.js';
import { scalesExactly, singlePhotonProblem, unscaledBound, yieldScale } from './single-photon.js';
import type { ProblemJson } from '../problem/json.js';

/** The protocol as run: intensities, basis choice, error-correction efficiency. */
export interface DecoyProtocol {
  /** Mean photon number μ of the signal (key) pulses. */
  signal: number;
  /** Decoy mean photon numbers ν₁, ν₂, … (0 is the vacuum decoy). */
  decoys: number[];
  /** Probability that Alice prepares, and Bob measures, in Z (the key basis). */
  zBasisProbability: number;
  /** f ≥ 1: leakage is f·h(E_μ) per sifted detected signal pulse. */
  ecEfficiency: number;
}

export interface DecoyAnalysisOptions {
  entropy?: EntropyRequest;
  cutoff?: number;
  /** Solver settings; the gap tolerance is relative to the key-branch weight p_Z²·Y₁ᴸ (see singlePhotonSettings). */
  settings?: Partial<SolverSettings>;
}

/** Relative gap asked of the single-photon solve unless the caller sets one. */
export const DEFAULT_RELATIVE_GAP = 1e-7;
export const DEFAULT_SINGLE_PHOTON_TIME_LIMIT_MS = 20_000;

export interface DecoyRateResult {
  /** Key bits per signal pulse (negative: no key at this point). Null when the single-photon solve gave no bound. */
  ratePerPulse: number | null;
  /** Y₁ᴸ in the key basis Z. */
  singlePhotonYieldLower: number;
  /** e₁ᵁ in the X basis: the bound on the phase error of the single-photon key rounds. */
  singlePhotonErrorUpper: number;
  /** P(n = 1 | μ) = μe^{−μ}. */
  singlePhotonFraction: number;
  /** Certified single-photon entropy per single-photon pulse: singlePhoton.certifiedLowerBound mapped back from the scaled problem. */
  singlePhotonBound: number | null;
  /** The solver's upper bound mapped back the same way (F at a feasible state: the minimum lies in between). */
  singlePhotonUpperBound: number | null;
  /** The solver's full result for singlePhotonProblem (whose yields are divided by singlePhotonScale). */
  singlePhoton: SolveResult;
  /** The single-photon problem as solved (protobuf JSON): `renyi-bound verify` re-checks the certificate against it. */
  singlePhotonProblem: ProblemJson;
  /** Power of two s: the problem's yields are the decoy bounds divided by s (1 for sandwiched-up; docs/decoy.md). */
  singlePhotonScale: number;
  /** The gains the LP bounds were computed from, per basis (simulated from the channel, or observed). */
  observations: Record<Basis, IntensityObservation[]>;
  /** analyticSinglePhoton(): the von Neumann value by Shor–Preskill / GLLP, for comparison only. */
  analyticSinglePhotonBound: number;
  /** p_Z²·Q_μ·f·h(E_μ) in the Z basis. */
  leakage: number;
  signalGain: number;
  signalErrorRate: number;
  bases: Record<Basis, Omit<BasisBounds, 'certificates'> & { certificates: BasisBounds['certificates'] }>;
  entropy: string;
  alpha: number | null;
  cutoff: number;
}

/** Both bases see the channel alike: the observations the model predicts at every intensity. */
export function simulatedObservations(channel: ChannelParameters, protocol: DecoyProtocol): Record<Basis, IntensityObservation[]> {
  const rows = [protocol.signal, ...protocol.decoys].map((intensity) => ({ intensity, ...expectedGain(channel, intensity) }));
  return { Z: rows, X: rows.map((r) => ({ ...r })) };
}

export function analyseDecoy(
  highs: Highs,
  protocol: DecoyProtocol,
  observations: Record<Basis, IntensityObservation[]>,
  options: DecoyAnalysisOptions = {},
): DecoyRateResult {
  const cutoff = options.cutoff ?? DEFAULT_CUTOFF;
  const entropy = options.entropy ?? { kind: 'von-neumann' };
  const bases = { Z: basisBounds(highs, 'Z', observations.Z, cutoff), X: basisBounds(highs, 'X', observations.X, cutoff) };
  const pz = protocol.zBasisProbability;
  // The problem is solved with its yields magnified to order one (exact; docs/decoy.md, "Scaling of the single-photon problem").
  const scale = scalesExactly(entropy) ? yieldScale(bases) : 1;
  // The gap is asked relative to the key-branch weight; with no single-photon detection certified (Y₁ᴸ = 0, the
  // bound is then 0) relative to its largest possible value, since 1e-12 absolute would only run into the limits.
  const keyWeight = (pz * pz * (bases.Z.yieldLower > 0 ? bases.Z.yieldLower : bases.Z.yieldUpper)) / scale;
  const problemJson = singlePhotonProblem(bases, pz, scale);
  const problem = problemFromJson(problemJson);
  const settings: Partial<SolverSettings> = {
    gapTolerance: Math.min(1, Math.max(1e-12, DEFAULT_RELATIVE_GAP * keyWeight)),
    timeLimitMs: DEFAULT_SINGLE_PHOTON_TIME_LIMIT_MS,
    ...options.settings,
  };
  const singlePhoton = solve(problem, entropy, settings);
  const signalRow = signalObservation(protocol, observations);
  const { leakage, errorRate: signalErrorRate } = leakageOf(protocol, signalRow);
  const fraction = singlePhotonFraction(protocol.signal);
  const bound = singlePhoton.certifiedLowerBound === null ? null : unscaledBound(entropy, singlePhoton.certifiedLowerBound, scale);
  return {
    ratePerPulse: bound === null ? null : ratePerPulse(fraction, bound, leakage),
    singlePhotonYieldLower: bases.Z.yieldLower,
    singlePhotonErrorUpper: bases.X.errorRateUpper,
    singlePhotonFraction: fraction,
    singlePhotonBound: bound,
    singlePhoton,
    singlePhotonUpperBound: singlePhoton.upperBound === null ? null : unscaledBound(entropy, singlePhoton.upperBound, scale, 'upper'),
    singlePhotonProblem: problemJson,
    singlePhotonScale: scale,
    observations,
    analyticSinglePhotonBound: analyticSinglePhoton(bases, pz),
    leakage,
    signalGain: signalRow.gain,
    signalErrorRate,
    bases,
    entropy: singlePhoton.entropy,
    alpha: singlePhoton.alpha,
    cutoff,
  };
}

/** The rate with the analytic single-photon term (von Neumann): fast, for sweeps and uncertainty bands. */
export function analyticRate(highs: Highs, protocol: DecoyProtocol, observations: Record<Basis, IntensityObservation[]>, cutoff = DEFAULT_CUTOFF): number {
  const bases = { Z: basisBounds(highs, 'Z', observations.Z, cutoff), X: basisBounds(highs, 'X', observations.X, cutoff) };
  const { leakage } = leakageOf(protocol, signalObservation(protocol, observations));
  return ratePerPulse(singlePhotonFraction(protocol.signal), analyticSinglePhoton(bases, protocol.zBasisProbability), leakage);
}

/** The infinite-decoy limit: the true Y₁ and e₁ of the channel in place of their bounds (Lo, Ma, Chen 2005). */
export function infiniteDecoyRate(channel: ChannelParameters, protocol: DecoyProtocol): number {
  const { yield: y1, errorYield } = photonYield(channel, 1);
  const pz = protocol.zBasisProbability;
  const single = pz * pz * y1 * (1 - binaryEntropy(Math.min(0.5, errorYield / y1)));
  const { leakage } = leakageOf(protocol, { intensity: protocol.signal, ...expectedGain(channel, protocol.signal) });
  return ratePerPulse(singlePhotonFraction(protocol.signal), single, leakage);
}

export { BASES, analyticSinglePhoton };
