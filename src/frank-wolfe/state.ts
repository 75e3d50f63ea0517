// The solver's explicit state: what set-up fixes for the whole run, and what each iteration changes.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigh, type HermitianEigen } from '../linear-algebra/eigen.js';
import type { Objective, ObjectiveEvaluation, ReferenceBlocks } from '../objectives/index.js';
import type { LinearOracle } from '../oracle/index.js';
import type { FeasibleFace } from '../problem/feasible-face.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { NoProgressCause, SolveResult, StopLimit } from '../result/types.js';
import type { BoundBreakdown } from '../certificate/bound.js';
import { trivialLowerBound } from '../certificate/trivial-bound.js';
import type { ActiveSet } from './active-set.js';
import type { HeldSide } from './face-newton.js';
import type { TangentQuasiNewton } from './quasi-newton.js';
import type { SolveControl, SolverSettings } from './settings.js';

/** Dual multipliers y⁺ (on lower bounds) and y⁻ (on upper bounds), one each per constraint. */
export interface Multipliers {
  lower: Float64Array;
  upper: Float64Array;
}

/** The best linearization found so far, with everything its certificate stores. */
export interface CertifiedPoint {
  breakdown: BoundBreakdown;
  state: ComplexMatrix;
  reference?: ReferenceBlocks;
  multipliersLower: Float64Array;
  multipliersUpper: Float64Array;
}

/** The fields every result repeats. */
export type ResultBase = Pick<SolveResult, 'entropy' | 'alpha' | 'inputHash'>;

/** Thrown by the run's checkpoint when the time limit passes or the request is cancelled; caught by solve(). */
export class SolveInterrupted extends Error {
  constructor(readonly limit: 'time' | 'cancelled') {
    super(limit === 'time' ? 'time limit reached' : 'cancelled');
    this.name = 'SolveInterrupted';
  }
}

/** Wall time since the start, the share of it spent in the oracle, and the checkpoint every phase polls. */
export class RunClock {
  readonly started = performance.now();
  oracleSeconds = 0;
  /** Elapsed milliseconds after which the checkpoint throws (the time limit, extended once for the last certificate). */
  deadlineMs: number;

  constructor(
    readonly timeLimitMs: number,
    private readonly isCancelled: (() => boolean) | undefined,
  ) {
    this.deadlineMs = timeLimitMs;
  }

  elapsedMs(): number {
    return performance.now() - this.started;
  }

  /** Called between expensive steps of every phase; throws SolveInterrupted to abort. */
  readonly checkpoint = (): void => {
    if (this.isCancelled?.()) throw new SolveInterrupted('cancelled');
    if (this.elapsedMs() > this.deadlineMs) throw new SolveInterrupted('time');
  };

  /** Runs one oracle call and adds its time to oracleSeconds. */
  timeOracle<T>(call: () => T): T {
    const start = performance.now();
    try {
      return call();
    } finally {
      this.oracleSeconds += (performance.now() - start) / 1000;
    }
  }
}

/** Fixed by set-up for the whole run. */
export interface SolverSetup {
  problem: Problem;
  /** The problem with inactive bounds dropped, on the whole space (the lifted face bound linearizes there). */
  activeProblem: Problem;
  settings: SolverSettings;
  control: SolveControl;
  entropy: Required<EntropyRequest>;
  base: ResultBase;
  clock: RunClock;
  face: FeasibleFace;
  /** The problem on the feasible face, inactive bounds dropped (what the oracle and the objective see). */
  restricted: Problem;
  /** Remarks for the result (dropped bounds, properties of the requested quantity). */
  notes: string[];
  oracle: LinearOracle;
  objective: Objective;
  /** The oracle's analytic centre: the mixing partner for better-conditioned certificates. */
  interiorPoint: ComplexMatrix;
  /** Interval operators seen in the tangent space of the equalities (null for equalities). */
  intervalTangents: (ComplexMatrix | null)[];
}

/** Changed by the iterations. */
export interface SolverState {
  x: ComplexMatrix;
  evaluation: ObjectiveEvaluation & { gradient: ComplexMatrix };
  atoms: ActiveSet;
  quasiNewton: TangentQuasiNewton;
  /** The last iterate and its tangent gradient, for the next quasi-Newton pair. */
  previous: { state: ComplexMatrix; tangentGradient: ComplexMatrix } | null;
  best: CertifiedPoint | null;
  limit: StopLimit | undefined;
  iterations: number;
  oracleAccuracy: number;
  oracleCalls: number;
  /** The estimated gap at the start of the current stall window and that window's first iteration. */
  gapAtWindowStart: number;
  windowStart: number;
  /** The certified bound that last counted as progress, and when. */
  progressLower: number;
  progressIteration: number;
  quasiNewtonRun: number;
  lastDecrease: number;
  afterFrankWolfe: boolean;
  lastEstimatedGap: number;
  /** Oracle calls before which no face-Newton step is tried again (after a failed one). */
  faceNewtonRetryAt: number;
  /** Face-Newton attempts in a row that did not pay. */
  faceNewtonMisses: number;
  /** The last oracle answer's own duality gap (primal − dual): how finely it resolves the linear minimum. */
  lastOracleGap: number;
  /** Set when the run stops on no-progress. */
  noProgressCause: NoProgressCause | undefined;
  /** The sides held at the end of the last successful rank-manifold step (interval sides its steps ran into). */
  manifoldHeld?: readonly HeldSide[];
  /** Objective evaluations spent in face-Newton steps so far. */
  faceNewtonEvaluations: number;
  /** Whether the central path has been followed (at most once). */
  centralPathTried?: boolean;
  /**
   * Centred points of that path whose path gap w·ν is within the requested gap, not yet certified: the barrier keeps
   * them off the cone's boundary, so they are the neighbours to certify first (each once).
   */
  centredPoints: { point: ComplexMatrix; evaluation: ObjectiveEvaluation & { gradient: ComplexMatrix }; pathGap: number }[];
  /** Whether the zero-entropy test has run (it runs at most once). */
  zeroEntropyTried?: boolean;
  /** The iterate's eigendecomposition, computed at most once per iterate. */
  eigenOf: { state: ComplexMatrix; eigen: HermitianEigen } | null;
}

/** The iterate's eigendecomposition (step limits and certification share it). */
export function iterateEigen(state: SolverState): HermitianEigen {
  if (state.eigenOf?.state !== state.x) state.eigenOf = { state: state.x, eigen: eigh(state.x) };
  return state.eigenOf.eigen;
}

/** The best certified lower bound so far (−∞ before the first certificate). */
export function bestLowerBound(state: SolverState): number {
  return state.best ? state.best.breakdown.lowerBound : -Infinity;
}

/**
 * The lower bound the result will report: the best certificate's, raised to the trivial bound (which holds for every
 * state, src/certificate/trivial-bound.ts) — a run whose iterate is within the gap of the trivial bound is done.
 */
export function reportedLowerBound(setup: SolverSetup, state: SolverState): number {
  return Math.max(bestLowerBound(state), trivialLowerBound(setup.problem));
}

/**
 * F and ∇F at a point the optimiser believes full rank, or null when rounding has made some branch output
 * numerically singular there (non-finite numbers): the caller treats that point as outside the domain.
 */
export function evaluateSafely(
  objective: Objective,
  state: ComplexMatrix,
): (ObjectiveEvaluation & { gradient: ComplexMatrix }) | null {
  let e: ObjectiveEvaluation;
  try {
    e = objective.evaluate(state, { assumeFullRank: true });
  } catch (error) {
    if (error instanceof RangeError) return null;
    throw error;
  }
  const g = e.gradient;
  if (!g || !Number.isFinite(e.value)) return null;
  let sum = 0;
  for (let k = 0; k < g.re.length; k++) sum += Math.abs(g.re[k]) + Math.abs(g.im[k]);
  return Number.isFinite(sum) ? { ...e, gradient: g } : null;
}
