// One Frank–Wolfe iteration: a quasi-Newton step in the tangent space while those pay off, else a pairwise step
// toward the oracle's vertex; the oracle also estimates the gap, triggers certification and is tightened on stalls.
import {
  addScaledInPlace,
  hermitianPart,
  scale,
  subtract,
  traceProductReal,
  type ComplexMatrix,
} from '../linear-algebra/complex-matrix.js';
import type { ObjectiveEvaluation } from '../objectives/index.js';
import type { LinearOracle, OracleResult } from '../oracle/index.js';
import type { NoProgressCause, StopLimit } from '../result/types.js';
import { trivialLowerBound } from '../certificate/trivial-bound.js';
import { barrierParameter, beyondCentralPath, DEFAULT_CENTRAL_PATH, followCentralPath } from './central-path.js';
import { certify, restoreMultipliers } from './certify.js';
import { DEFAULT_FACE_NEWTON, faceNewtonStep, FACE_NEWTON_SCHEDULE, heldIntervalSides } from './face-newton.js';
import { derivativeLineSearch } from './line-search.js';
import { rankManifoldStep } from './rank-manifold.js';
import { TUNING } from './settings.js';
import { alongActiveIntervals, stepToEigenvalueFloor, stepToIntervalBounds } from './step-limits.js';
import {
  bestLowerBound,
  evaluateSafely,
  iterateEigen,
  reportedLowerBound,
  type Multipliers,
  type SolverSetup,
  type SolverState,
} from './state.js';
import { zeroEntropyState } from './zero-entropy.js';

/** What an iteration asks of the loop: go on, stop (certified), or end without a bound (the reason). */
export type IterationOutcome = 'continue' | 'stop' | { failure: string };

type EqualitySplit = ReturnType<LinearOracle['stripEqualitySpan']>;

/** The limit that ends the run before the next iteration, if any (also books progress of the certified bound). */
export function reachedLimit(setup: SolverSetup, state: SolverState): StopLimit | undefined {
  const { settings, control, clock } = setup;
  if (control.isCancelled?.()) return 'cancelled';
  if (state.iterations >= settings.maxIterations) return 'iterations';
  if (clock.elapsedMs() > settings.timeLimitMs) return 'time';
  const currentLower = bestLowerBound(state);
  if (currentLower > state.progressLower + TUNING.progressShare * settings.gapTolerance) {
    state.progressLower = currentLower;
    state.progressIteration = state.iterations;
  } else if (
    state.oracleAccuracy <= TUNING.finestOracleAccuracy &&
    state.iterations - state.progressIteration >= TUNING.progressWindow
  ) {
    state.noProgressCause = noProgressCause(settings.gapTolerance, state);
    if (state.noProgressCause !== undefined) return 'no-progress';
    // Neither allowance explains the gap: keep optimising (the time and iteration limits still apply).
    state.progressIteration = state.iterations;
  }
  return undefined;
}

/** How many times the dominant floating-point allowance the gap may be for a no-progress stop. */
const NO_PROGRESS_DOMINANCE = 4;
/**
 * A no-progress stop never happens at a gap this many times the certificate's margin or more (issue item 3): the
 * oracle's duality gap there is the optimiser's own inaccuracy (an oracle on a face without interior, say), not a
 * floating-point limit, so the run goes on to its time or iteration limit.
 */
const NO_PROGRESS_MARGIN_CEILING = 100;

/**
 * The allowance that explains a stalled gap — the best certificate's margin or the oracle's own duality gap — when
 * the gap is at most NO_PROGRESS_DOMINANCE times it and below NO_PROGRESS_MARGIN_CEILING times the margin;
 * undefined otherwise (the stall is the optimiser's, not rounding's, so stopping would be premature).
 */
export function noProgressCause(gapTolerance: number, state: SolverState): NoProgressCause | undefined {
  if (state.best === null) return undefined;
  const gap = state.evaluation.value - state.best.breakdown.lowerBound;
  if (!(gap > gapTolerance)) return undefined;
  const margin = state.best.breakdown.margin;
  if (!(gap < NO_PROGRESS_MARGIN_CEILING * margin)) return undefined;
  if (gap <= NO_PROGRESS_DOMINANCE * margin) return 'margin';
  const oracle = Math.max(0, state.lastOracleGap);
  return gap <= NO_PROGRESS_DOMINANCE * oracle ? 'oracle-accuracy' : undefined;
}

export function iterate(setup: SolverSetup, state: SolverState): IterationOutcome {
  const before = { x: state.x, evaluation: state.evaluation };
  const outcome = iterateOnce(setup, state);
  // Every move checks the cone on its own terms; this backstop (its eigendecomposition is the next step's anyway)
  // undoes one that still left it, so that the final state is always positive definite (docs/convergence.md).
  if (state.x !== before.x && !(iterateEigen(state).values[0] > 0)) restartAt(state, before.x, before.evaluation);
  return outcome;
}

/** Jumps to a point (forgetting the atoms and the curvature pairs of the old path); Frank–Wolfe steps next. */
function restartAt(state: SolverState, point: ComplexMatrix, evaluation: SolverState['evaluation']): void {
  state.x = point;
  state.evaluation = evaluation;
  state.atoms.reset(state.x);
  state.quasiNewton.reset();
  state.previous = null;
  state.lastDecrease = 0;
  state.afterFrankWolfe = true;
}

function iterateOnce(setup: SolverSetup, state: SolverState): IterationOutcome {
  // At the trivial bound a certificate already on record suffices: the result reports the trivial bound.
  const aboveLower = state.evaluation.value - reportedLowerBound(setup, state);
  if (state.best !== null && aboveLower >= 0 && aboveLower <= setup.settings.gapTolerance) return 'stop';
  const split = setup.oracle.stripEqualitySpan(state.evaluation.gradient);
  state.iterations++;
  // Quasi-Newton pair from the last move, in the tangent space of the equalities.
  if (state.previous) {
    state.quasiNewton.update(subtract(state.x, state.previous.state), subtract(split.stripped, state.previous.tangentGradient));
  }
  state.previous = { state: state.x, tangentGradient: split.stripped };

  // The oracle (gap estimate, certificate, Frank–Wolfe vertex) is skipped while quasi-Newton steps pay off; when
  // they stop paying (a decrease small against the estimated gap), one Frank–Wolfe step is taken instead.
  const quasiNewtonPaying = state.lastDecrease >= TUNING.quasiNewtonPayoff * state.lastEstimatedGap;
  const tryQuasiNewton = state.quasiNewton.ready && (quasiNewtonPaying || state.afterFrankWolfe);
  const oracleDue = !tryQuasiNewton || state.afterFrankWolfe || state.quasiNewtonRun >= TUNING.longestQuasiNewtonRun;
  state.afterFrankWolfe = false;
  let answer: OracleResult | null = null;
  if (oracleDue) {
    const consulted = consultOracle(setup, state, split);
    if (consulted === 'stop' || 'failure' in consulted) return consulted;
    answer = consulted.answer;
    if (moveAfterOracle(setup, state, consulted.multipliers)) return 'continue';
  }

  if (tryQuasiNewton && quasiNewtonStep(setup, state, split)) return 'continue';
  // Quasi-Newton gets another chance after this Frank–Wolfe step.
  state.lastDecrease = 0;
  state.afterFrankWolfe = true;
  if (answer === null) {
    const consulted = consultOracle(setup, state, split);
    if (consulted === 'stop' || 'failure' in consulted) return consulted;
    answer = consulted.answer;
    if (moveAfterOracle(setup, state, consulted.multipliers)) return 'continue';
  }
  pairwiseStep(setup, state, answer.point as ComplexMatrix);
  return 'continue';
}

/** After an oracle call: the moves that leave Frank–Wolfe's step for a better point, in the order they are tried. */
function moveAfterOracle(setup: SolverSetup, state: SolverState, multipliers: Multipliers): boolean {
  return zeroEntropyMove(setup, state) || centralPathMove(setup, state) || faceNewtonMove(setup, state, multipliers);
}

/** The zero-entropy test waits for this many oracle calls: by then Frank–Wolfe's gap estimate excludes most problems. */
const ZERO_ENTROPY_FIRST_ORACLE_CALL = 2;
/** Mixing shares ε toward the current iterate that keep a zero-entropy state strictly inside the cone. */
const ZERO_ENTROPY_MIXTURES = [1e-10, 1e-8, 1e-6, 1e-4] as const;
/** F must stay this far above the trivial bound at the new iterate, so that rounding cannot put it below. */
const ABOVE_ROUNDING = 1e-12;

/**
 * Once Frank–Wolfe has run a few oracle calls and neither the certified bound nor its own gap estimate rules out
 * the trivial bound as the minimum, one semidefinite feasibility problem looks for a state where the eavesdropper
 * knows the key (zero-entropy.ts). Found, the iterate jumps next to it: (1−ε)·ρ₀ + ε·x is feasible and full rank.
 */
function zeroEntropyMove(setup: SolverSetup, state: SolverState): boolean {
  if (state.zeroEntropyTried || state.oracleCalls < ZERO_ENTROPY_FIRST_ORACLE_CALL) return false;
  const trivial = trivialLowerBound(setup.problem);
  const tolerance = setup.settings.gapTolerance;
  if (bestLowerBound(state) > trivial + tolerance || state.evaluation.value - state.lastEstimatedGap > trivial + tolerance) return false;
  state.zeroEntropyTried = true;
  const found = setup.clock.timeOracle(() => zeroEntropyState(setup.restricted, setup.face.dimension, setup.clock.checkpoint));
  if (found === null) return false;
  let chosen: { point: ComplexMatrix; evaluation: NonNullable<ReturnType<typeof evaluateSafely>> } | null = null;
  for (const share of ZERO_ENTROPY_MIXTURES) {
    const point = scale(found, 1 - share);
    addScaledInPlace(point, state.x, share);
    const e = evaluateSafely(setup.objective, point);
    if (!e || e.value < trivial + ABOVE_ROUNDING) continue;
    if (e.value < (chosen?.evaluation.value ?? state.evaluation.value)) chosen = { point, evaluation: e };
    if (chosen && chosen.evaluation.value - trivial <= 0.1 * tolerance) break;
  }
  if (chosen === null) return false;
  restartAt(state, chosen.point, chosen.evaluation);
  return true;
}

/** The central path waits for this many oracle calls: the examples and most interior optima certify before. */
const CENTRAL_PATH_FIRST_ORACLE_CALL = 12;
/** It ends at the weight μ with μ·ν at this share of the requested gap (ν: the barrier parameter). */
const CENTRAL_PATH_END_SHARE = 0.05;
/** Its start mixes the iterate toward the analytic centre by at most this share… */
const CENTRE_MIX_LIMIT = 0.5;
/** …and by no more than raises F by this share of the estimated gap. */
const CENTRE_MIX_GAP_SHARE = 0.1;

/**
 * Once Frank–Wolfe has run a dozen oracle calls without certifying, one run along the central path from the
 * iterate (central-path.ts), starting at the weight whose path gap μ·ν is the estimated gap. Each centred point
 * that lowers F becomes the iterate; the oracle then certifies it (or Frank–Wolfe goes on from it).
 */
function centralPathMove(setup: SolverSetup, state: SolverState): boolean {
  if (state.centralPathTried || state.oracleCalls < CENTRAL_PATH_FIRST_ORACLE_CALL) return false;
  state.centralPathTried = true;
  const constraints = setup.restricted.constraints;
  if (beyondCentralPath(state.x.rows, constraints, DEFAULT_CENTRAL_PATH)) return false;
  const nu = barrierParameter(state.x.rows, constraints);
  const endWeight = (CENTRAL_PATH_END_SHARE * setup.settings.gapTolerance) / nu;
  const startWeight = Math.max(endWeight, state.lastEstimatedGap / nu);
  const evaluate = (point: ComplexMatrix) => {
    setup.clock.checkpoint();
    return evaluateSafely(setup.objective, point);
  };
  let improved = false;
  const trivial = trivialLowerBound(setup.problem);
  const accept = (point: ComplexMatrix, evaluation: SolverState['evaluation'], weight: number) => {
    // Well-conditioned by the barrier, with linearization gap ≈ w·ν: kept as certification neighbours (certify.ts).
    if (weight * nu <= setup.settings.gapTolerance) state.centredPoints.push({ point, evaluation, pathGap: weight * nu });
    // Not a point whose F rounds below the trivial bound: the result could state no upper bound there (d32#7).
    if (!(evaluation.value < state.evaluation.value) || evaluation.value < trivial + ABOVE_ROUNDING) return;
    restartAt(state, point, evaluation);
    improved = true;
  };
  const options = { ...DEFAULT_CENTRAL_PATH, startWeight, endWeight };
  // The path starts from the iterate mixed toward the analytic centre, by a share that costs F at most a tenth of
  // the estimated gap (convexity): Frank–Wolfe leaves eigenvalues at the floor, far from any centred point, and
  // Newton steps from there crawl (d8#11 sandwiched-up α = 1.2: no certificate in 5 s unmixed, 0.9 s mixed).
  let start = { point: state.x, evaluation: state.evaluation };
  const atCentre = evaluateSafely(setup.objective, setup.interiorPoint);
  if (atCentre && atCentre.value > state.evaluation.value) {
    const rise = atCentre.value - state.evaluation.value;
    const share = Math.min(CENTRE_MIX_LIMIT, (CENTRE_MIX_GAP_SHARE * state.lastEstimatedGap) / rise);
    const point = scale(state.x, 1 - share);
    addScaledInPlace(point, setup.interiorPoint, share);
    const mixed = evaluateSafely(setup.objective, point);
    if (mixed) start = { point, evaluation: mixed };
  }
  try {
    followCentralPath(start.point, start.evaluation, constraints, evaluate, options, accept);
  } catch (error) {
    // A kernel's RangeError (non-finite numbers in a Newton step) ends the path, not the solve: every point it
    // handed over was evaluated and checked.
    if (!(error instanceof RangeError)) throw error;
  }
  return improved;
}

/**
 * Once Frank–Wolfe has run a few oracle calls without certifying, a Newton step on the face of the interval sides
 * the oracle's multipliers hold active (and the iterate's large eigen-directions); after a failed attempt the
 * next waits a few oracle calls. The oracle is consulted right after a move, so the new point is certified next.
 */
function faceNewtonMove(setup: SolverSetup, state: SolverState, multipliers: Multipliers): boolean {
  if (state.oracleCalls < Math.max(FACE_NEWTON_SCHEDULE.firstOracleCall, state.faceNewtonRetryAt)) return false;
  // Its Hessian costs two evaluations per tangent direction: a budget per iteration keeps it from dominating
  // (counted, not timed, so that a run is reproducible from its input).
  if (state.faceNewtonEvaluations > FACE_NEWTON_SCHEDULE.evaluationsPerIteration * state.iterations) return false;
  const held = heldIntervalSides(setup.restricted.constraints, state.x, multipliers, state.manifoldHeld);
  const evaluate = (point: ComplexMatrix) => {
    // A Hessian takes up to 2·144 evaluations: the deadline is polled before each (the iterate is unchanged).
    setup.clock.checkpoint();
    state.faceNewtonEvaluations++;
    return evaluateSafely(setup.objective, point);
  };
  const before = state.evaluation.value;
  // Several Newton steps in a row reach the face's optimum, which the oracle then certifies (or Frank–Wolfe
  // leaves, when the face was wrong); they stop once the predicted decrease is far below the requested gap.
  const options = { ...DEFAULT_FACE_NEWTON, stopDecrement: FACE_NEWTON_SCHEDULE.converged * setup.settings.gapTolerance };
  const args = [state.x, state.evaluation, setup.restricted.constraints, held, evaluate, options] as const;
  const onManifold = state.oracleCalls >= FACE_NEWTON_SCHEDULE.firstManifoldOracleCall ? rankManifoldStep(...args) : null;
  // Sides a manifold step ran into stay candidates for the next attempt (the multipliers may not weight them yet).
  state.manifoldHeld = onManifold?.holding ?? state.manifoldHeld;
  const moved = onManifold ?? faceNewtonStep(...args);
  const decrease = moved ? before - moved.evaluation.value : 0;
  if (!moved || decrease < FACE_NEWTON_SCHEDULE.payoff * state.lastEstimatedGap) {
    // Each unpaid attempt doubles the wait (an optimum on the cone's boundary gains little from the face).
    state.faceNewtonRetryAt = state.oracleCalls + FACE_NEWTON_SCHEDULE.retryAfterOracleCalls * 2 ** state.faceNewtonMisses;
    state.faceNewtonMisses++;
  } else {
    state.faceNewtonMisses = 0;
  }
  if (!moved) return false;
  state.lastDecrease = 0;
  state.x = moved.point;
  state.evaluation = moved.evaluation;
  state.atoms.reset(state.x);
  state.afterFrankWolfe = true;
  return true;
}

/** A quasi-Newton step sliding along active intervals; false when it cannot lower F (Frank–Wolfe takes over). */
function quasiNewtonStep(setup: SolverSetup, state: SolverState, split: EqualitySplit): boolean {
  const { oracle, restricted } = setup;
  const direction = alongActiveIntervals(
    restricted,
    state.x,
    oracle.stripEqualitySpan(hermitianPart(state.quasiNewton.direction(split.stripped))).stripped,
    setup.intervalTangents,
    TUNING.shortestQuasiNewtonStep,
  );
  const slope = traceProductReal(split.stripped, direction);
  // A non-finite direction (or slope) is refused here: Frank–Wolfe takes the step instead.
  if (!(slope < 0) || !Number.isFinite(slope)) return false;
  const maxStep = Math.min(
    stepToEigenvalueFloor(state.x, iterateEigen(state), direction, TUNING.eigenvalueFloor, 1),
    stepToIntervalBounds(restricted, state.x, direction),
  );
  // A step cut short by the cone or an interval says the optimum sits on a face: Frank–Wolfe handles that.
  const moved = maxStep >= TUNING.shortestQuasiNewtonStep ? lineStep(setup, state, direction, slope, maxStep) : null;
  if (!moved) return false;
  state.lastDecrease = state.evaluation.value - moved.evaluation.value;
  state.x = moved.point;
  state.evaluation = moved.evaluation;
  state.atoms.reset(state.x);
  state.quasiNewtonRun++;
  return true;
}

/** A pairwise (away-to-toward) step toward the oracle's vertex, projected onto the equalities. */
function pairwiseStep(setup: SolverSetup, state: SolverState, vertex: ComplexMatrix): void {
  const gradient = state.evaluation.gradient;
  const toward = hermitianPart(setup.oracle.projectOntoEqualities(vertex));
  const away = state.atoms.awayAtom(gradient);
  const direction = subtract(toward, away.point);
  const slope = traceProductReal(gradient, direction);
  if (!(slope < 0) || !Number.isFinite(slope)) return;
  const maxStep = stepToEigenvalueFloor(state.x, iterateEigen(state), direction, TUNING.eigenvalueFloor, away.weight);
  const moved = lineStep(setup, state, direction, slope, maxStep);
  if (!moved) return;
  state.atoms.pairwiseStep(away.index, toward, moved.step);
  state.x = moved.point;
  state.evaluation = moved.evaluation;
}

/** Exact line search along x + t·d on [0, maxStep]; null when F does not decrease. */
function lineStep(setup: SolverSetup, state: SolverState, direction: ComplexMatrix, slope: number, maxStep: number) {
  const trials = new Map<number, ObjectiveEvaluation & { gradient: ComplexMatrix }>();
  const search = derivativeLineSearch(
    (step) => {
      // One evaluation can take seconds at d = 256: the deadline is polled before each (the iterate is unchanged).
      setup.clock.checkpoint();
      const point = state.x.clone();
      addScaledInPlace(point, direction, step);
      const e = evaluateSafely(setup.objective, point);
      if (!e) return null;
      trials.set(step, e);
      return { step, point, value: e.value, gradient: e.gradient };
    },
    direction,
    slope,
    maxStep,
    TUNING.lineSearchTolerance,
    TUNING.lineSearchEvaluations,
    setup.settings.gapTolerance,
  );
  const chosen = search.best;
  if (!chosen || !(chosen.value <= state.evaluation.value) || chosen.step <= 0) return null;
  return { step: chosen.step, point: chosen.point, evaluation: trials.get(chosen.step)! };
}

/** One oracle call: gap estimate, certification when it looks close, accuracy tightening on stalls. */
function consultOracle(
  setup: SolverSetup,
  state: SolverState,
  split: EqualitySplit,
): { answer: OracleResult; multipliers: Multipliers } | Exclude<IterationOutcome, 'continue'> {
  const { oracle, settings, clock } = setup;
  state.quasiNewtonRun = 0;
  // Far from the optimum a rough answer steps as well as an exact one and costs fewer interior-point iterations.
  const accuracy = Math.max(
    state.oracleAccuracy,
    Math.min(TUNING.coarsestOracleAccuracy, TUNING.oracleAccuracyShare * state.lastEstimatedGap),
  );
  const answer = clock.timeOracle(() => oracle.minimize(split.stripped, { relativeAccuracy: accuracy }));
  if (!answer.point) return { failure: `linear oracle failed: ${answer.message ?? answer.status}` };
  const multipliers = restoreMultipliers(answer, split.equalityCoefficients);
  state.lastOracleGap = answer.primalValue - answer.dualBound;
  const estimatedGap = traceProductReal(split.stripped, state.x) - answer.dualBound;
  state.lastEstimatedGap = estimatedGap;
  const upper = state.evaluation.value;
  if (
    estimatedGap <= TUNING.certifyShare * settings.gapTolerance ||
    state.oracleCalls % TUNING.certifyEvery === 0 ||
    upper - reportedLowerBound(setup, state) <= settings.gapTolerance
  ) {
    certify(setup, state, multipliers);
    const certifiedGap = upper - reportedLowerBound(setup, state);
    if (state.best && certifiedGap <= settings.gapTolerance) return 'stop';
    // Gradients must be accurate on the scale of the gap still to close (docs/convergence.md, the inner loop's stop).
    if (state.best) setup.objective.allowInnerError(TUNING.innerErrorShare * certifiedGap);
  }
  state.oracleCalls++;
  // Tighten the oracle when the estimated gap stalls (its rounding then dominates the step).
  if (estimatedGap < 0.9 * state.gapAtWindowStart) {
    state.gapAtWindowStart = estimatedGap;
    state.windowStart = state.iterations;
  } else if (state.iterations - state.windowStart >= TUNING.stallWindow && state.oracleAccuracy > TUNING.finestOracleAccuracy) {
    state.oracleAccuracy = Math.max(state.oracleAccuracy / 10, TUNING.finestOracleAccuracy);
    state.windowStart = state.iterations;
    state.gapAtWindowStart = estimatedGap;
  }
  return { answer, multipliers };
}
