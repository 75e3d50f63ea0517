// Certification: linearization bounds at the iterate and at better-conditioned neighbours; the best is kept.
import {
  add,
  addScaledInPlace,
  adjoint,
  ComplexMatrix,
  hermitianPart,
  multiply,
  scale,
} from '../linear-algebra/complex-matrix.js';
import type { ObjectiveEvaluation } from '../objectives/index.js';
import type { OracleResult } from '../oracle/index.js';
import { linearizationBound, type BoundBreakdown } from '../certificate/bound.js';
import { TUNING } from './settings.js';
import { evaluateSafely, iterateEigen, type Multipliers, type SolverSetup, type SolverState } from './state.js';

/** Multipliers for the full gradient from the oracle's answer on the stripped one (G = stripped + c₀·1 + Σ cᵢΓᵢ). */
export function restoreMultipliers(oracleResult: OracleResult, equalityCoefficients: Float64Array): Multipliers {
  const lower = Float64Array.from(oracleResult.multipliersLower);
  const upper = Float64Array.from(oracleResult.multipliersUpper);
  equalityCoefficients.forEach((c, i) => {
    if (c > 0) lower[i] += c;
    else if (c < 0) upper[i] -= c;
  });
  return { lower, upper };
}

/**
 * Keeps the linearization at `point` when its bound beats the best so far, and returns that bound with its margin.
 * While iterating, the margin's curvature (a few extra gradient evaluations) is measured only for a bound that could
 * then certify the requested gap; the last certification (`thorough`) measures it for any bound that could become
 * the best.
 */
function considerCandidate(
  setup: SolverSetup,
  state: SolverState,
  point: ComplexMatrix,
  pointEvaluation: ObjectiveEvaluation,
  y: Multipliers,
  thorough: boolean,
): BoundBreakdown {
  const best = state.best === null ? -Infinity : state.best.breakdown.lowerBound;
  const worthAbove = thorough ? best : Math.max(best, state.evaluation.value - setup.settings.gapTolerance);
  const breakdown = linearizationBound(
    setup.restricted,
    setup.objective,
    point,
    y.lower,
    y.upper,
    pointEvaluation.reference,
    pointEvaluation,
    worthAbove,
    setup.clock.checkpoint,
    setup.settings.gapTolerance,
  );
  if (Number.isFinite(breakdown.lowerBound) && (state.best === null || breakdown.lowerBound > state.best.breakdown.lowerBound)) {
    state.best = {
      breakdown,
      state: point,
      reference: pointEvaluation.reference,
      multipliersLower: y.lower,
      multipliersUpper: y.upper,
    };
  }
  return breakdown;
}

/** A neighbour of the iterate needs its own gradient and therefore its own oracle answer; −∞ when it gave no bound. */
function certifyNeighbour(
  setup: SolverSetup,
  state: SolverState,
  point: ComplexMatrix,
  thorough: boolean,
  evaluation?: ObjectiveEvaluation & { gradient: ComplexMatrix },
): number {
  setup.clock.checkpoint();
  const e = evaluation ?? evaluateSafely(setup.objective, point);
  if (!e) return -Infinity;
  const split = setup.oracle.stripEqualitySpan(e.gradient);
  const answer = setup.clock.timeOracle(() => setup.oracle.minimize(split.stripped, { relativeAccuracy: state.oracleAccuracy }));
  if (!answer.point && answer.status !== 'ITERATION_LIMIT') return -Infinity;
  return considerCandidate(setup, state, point, e, restoreMultipliers(answer, split.equalityCoefficients), thorough).lowerBound;
}

/** Stop trying neighbours once the best bound is within this share of the requested gap of F at the iterate. */
const ENOUGH_SHARE = 0.5;

/**
 * Lifts are tried first from the lowest level at which the iterate's margin, scaled by λ_min(x)/μ (the Weyl charge
 * grows like 1/λ_min), falls to this share of the requested gap; lower levels rarely certify (measured lift margins:
 * 0.38–4.5 times that prediction, docs/convergence.md) and are tried last.
 */
const LIFT_MARGIN_SHARE = 0.25;

/** The best bound already certifies the request with room to spare: further neighbours only cost evaluations. */
function certifiedEnough(setup: SolverSetup, state: SolverState): boolean {
  return state.best !== null && state.evaluation.value - state.best.breakdown.lowerBound <= ENOUGH_SHARE * setup.settings.gapTolerance;
}

/**
 * Certifies the iterate with multipliers y. Near the boundary of the cone the margin grows like 1/λ_min(ρ'). Any
 * full-rank ρ' gives a valid bound, so better-conditioned neighbours are tried as well and the best bound is kept:
 * mixtures (1−ε)x + ε·x₀ with the interior point, and x with its small eigenvalues lifted to a level μ (trace and
 * feasibility not needed). The search stops once half the requested gap is certified, so the order matters
 * (docs/convergence.md, "Choosing the linearization point"): mixtures with growing ε while each at least halves the
 * distance F(x) − bound; then lifts from the level the margin predicts, upwards while the bound is not clearly
 * worse than the best lift's; then every neighbour passed over. Each neighbour is tried at most once, so a search
 * that certifies nothing tries the same set as before.
 */
export function certify(setup: SolverSetup, state: SolverState, y: Multipliers, thorough = false): void {
  const { x } = state;
  const own = considerCandidate(setup, state, x, state.evaluation, y, thorough);
  const { values, vectors } = iterateEigen(state);
  if (values[0] >= TUNING.wellConditionedEigenvalue || certifiedEnough(setup, state)) return;
  const distance = (bound: number) => state.evaluation.value - bound;
  const mixture = (share: number) => () => {
    const point = scale(x, 1 - share);
    addScaledInPlace(point, setup.interiorPoint, share);
    return point;
  };
  const lift = (level: number) => () => {
    const lifted = Float64Array.from(values, (v) => Math.max(v, level) - v);
    return add(x, hermitianPart(multiply(multiply(vectors, ComplexMatrix.diagonal(lifted)), adjoint(vectors))));
  };
  // The central path's centred points first, largest path gap first: the barrier keeps their eigenvalues off the
  // boundary, so their margin is small where the iterate's own is not (d64#4: 1.4e-6 from lifts and mixtures at an
  // iterate with λ_min 7e-9, docs/convergence.md, "The central path").
  const centred = state.centredPoints.sort((a, b) => b.pathGap - a.pathGap).splice(0);
  for (const c of centred) {
    certifyNeighbour(setup, state, c.point, thorough, c.evaluation);
    if (certifiedEnough(setup, state)) return;
  }

  const passedOver: (() => ComplexMatrix)[] = [];
  const tryNeighbour = (build: () => ComplexMatrix) => distance(certifyNeighbour(setup, state, build(), thorough));

  const shares = TUNING.certificateMixtures.filter((share) => share > values[0]);
  let previous = distance(own.lowerBound);
  for (let i = 0; i < shares.length; i++) {
    const d = tryNeighbour(mixture(shares[i]));
    if (certifiedEnough(setup, state)) return;
    if (!(d <= 0.5 * previous)) {
      passedOver.push(...shares.slice(i + 1).map(mixture));
      break;
    }
    previous = d;
  }

  // Half-decade steps between the tuned levels: near a boundary optimum the margin (∝ 1/μ) and the linearization
  // loss (∝ μ) cross steeply, and the best μ decides whether a gap of 1e-6 is reachable at all.
  const levels = TUNING.certificateLiftLevels.flatMap((level) => [level, level * Math.sqrt(10)]).filter((level) => level > values[0]);
  const predictedLevel = (own.margin * values[0]) / (LIFT_MARGIN_SHARE * setup.settings.gapTolerance);
  const below = levels.filter((level) => !(level >= predictedLevel));
  const fromPrediction = levels.filter((level) => level >= predictedLevel);
  let bestLift = Infinity;
  for (let i = 0; i < fromPrediction.length; i++) {
    const d = tryNeighbour(lift(fromPrediction[i]));
    if (certifiedEnough(setup, state)) return;
    if (d > 2 * bestLift) {
      passedOver.push(...fromPrediction.slice(i + 1).map(lift));
      break;
    }
    bestLift = Math.min(bestLift, d);
  }

  for (const build of [...passedOver, ...below.map(lift)]) {
    tryNeighbour(build);
    if (certifiedEnough(setup, state)) return;
  }
}

/** Certifies the last iterate with a fresh oracle answer: a limit is a result with a valid bound. */
export function certifyLastIterate(setup: SolverSetup, state: SolverState): void {
  const split = setup.oracle.stripEqualitySpan(state.evaluation.gradient);
  const answer = setup.clock.timeOracle(() => setup.oracle.minimize(split.stripped, { relativeAccuracy: state.oracleAccuracy }));
  certify(setup, state, restoreMultipliers(answer, split.equalityCoefficients), true);
}
