import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { FieldError } from '../problem/errors.js';

export interface SolverSettings {
  /** Requested certified gap upper − lower, in bits. */
  gapTolerance: number;
  maxIterations: number;
  timeLimitMs: number;
}

export interface SolveControl {
  /** Checked once per Frank–Wolfe iteration; true stops the run with LIMIT_REACHED/cancelled. */
  isCancelled?: () => boolean;
  /** A density operator on H_A ⊗ H_B to start from (projected onto the feasible set first). */
  warmStart?: ComplexMatrix;
}

/** A solver setting out of range; `field` is "settings.<name>". */
export class SettingsError extends FieldError {}

/** Defaults a caller gets when a field is omitted. */
export const DEFAULT_SETTINGS: Readonly<SolverSettings> = Object.freeze({
  gapTolerance: 1e-6,
  maxIterations: 20000,
  timeLimitMs: 120000,
});

/** Fills defaults and range-checks every field; errors name the field. */
export function resolveSolverSettings(partial: Partial<SolverSettings> = {}, path = 'settings'): SolverSettings {
  const settings: SolverSettings = { ...DEFAULT_SETTINGS };
  for (const [key, value] of Object.entries(partial)) {
    if (value !== undefined && value !== null) (settings as unknown as Record<string, number>)[key] = value as number;
  }
  const { gapTolerance, maxIterations, timeLimitMs } = settings;
  if (typeof gapTolerance !== 'number' || !(gapTolerance >= 1e-12 && gapTolerance <= 1)) {
    throw new SettingsError(`${path}.gapTolerance`, `must be a number in [1e-12, 1], got ${String(gapTolerance)}`);
  }
  if (!Number.isInteger(maxIterations) || maxIterations < 1 || maxIterations > 10_000_000) {
    throw new SettingsError(`${path}.maxIterations`, `must be an integer in [1, 1e7], got ${String(maxIterations)}`);
  }
  if (typeof timeLimitMs !== 'number' || !(timeLimitMs > 0 && timeLimitMs <= 86_400_000)) {
    throw new SettingsError(`${path}.timeLimitMs`, `must be a number of milliseconds in (0, 86400000], got ${String(timeLimitMs)}`);
  }
  return settings;
}

/** Internal tuning of the optimiser; none changes what a certificate proves, only how fast it is reached. */
export const TUNING = Object.freeze({
  /** Relative accuracy of the first oracle solves (an interior answer is a better step than an exact vertex). */
  initialOracleAccuracy: 1e-7,
  /** While the estimated gap is large the oracle is asked for this share of it as its relative accuracy… */
  oracleAccuracyShare: 1e-2,
  /** …but never for less than this. */
  coarsestOracleAccuracy: 1e-3,
  /** The oracle accuracy is never tightened beyond this (its practical floor in double precision). */
  finestOracleAccuracy: 1e-11,
  /** Iterations without a 10 % drop of the estimated gap before the oracle accuracy is tightened tenfold. */
  stallWindow: 15,
  /** Certify (full bound with margin) when the estimated gap is below this share of the requested gap. */
  certifyShare: 0.5,
  /** …and at least every this many iterations, so a limit always finds a recent certificate. */
  certifyEvery: 25,
  /** Sandwiched-up: after each certificate, F's error from the inner loop over τ may be this share of the gap. */
  innerErrorShare: 1e-2,
  /** Shares ε of the interior point mixed into the iterate when certifying near the boundary of the cone. */
  certificateMixtures: [1e-10, 1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4] as readonly number[],
  /** Levels μ to which the iterate's small eigenvalues are lifted for the same purpose. */
  certificateLiftLevels: [1e-9, 1e-8, 1e-7, 1e-6, 1e-5] as readonly number[],
  /** An iterate whose smallest eigenvalue is at least this needs no better-conditioned neighbour. */
  wellConditionedEigenvalue: 1e-4,
  /** Smallest eigenvalue a step may leave in the iterate (its trace is 1). */
  eigenvalueFloor: 1e-9,
  /** With the oracle at its finest accuracy, stop after this many iterations without the certified bound rising. */
  progressWindow: 150,
  /** …where rising means by more than this share of the requested gap. */
  progressShare: 1e-3,
  /** Step pairs remembered by the quasi-Newton steps in the tangent space of the equalities. */
  quasiNewtonMemory: 12,
  /** A quasi-Newton step whose room (cone or interval) is shorter than this is replaced by a Frank–Wolfe step. */
  shortestQuasiNewtonStep: 1e-3,
  /** Quasi-Newton steps allowed in a row without consulting the oracle. */
  longestQuasiNewtonRun: 8,
  /** …as long as each lowers F by at least this share of the last estimated gap. */
  quasiNewtonPayoff: 0.05,
  /** Atoms kept by pairwise steps before the two lightest are merged into their weighted mean. */
  maxAtoms: 60,
  /** Line search stops when |φ'(t)| ≤ this share of |φ'(0)|. */
  lineSearchTolerance: 1e-6,
  /** Derivative evaluations allowed per line search. */
  lineSearchEvaluations: 40,
  /** An atom whose weight falls below this is dropped. */
  atomWeightFloor: 1e-15,
});
