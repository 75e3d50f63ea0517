import { Matrix, solve as solveLinear } from 'ml-matrix';
import {
  add,
  addScaledInPlace,
  adjoint,
  ComplexMatrix,
  hermitianPart,
  multiply,
  multiplyAdjointLeft,
  scale,
  subtract,
  trace,
  traceProductReal,
} from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh, type HermitianEigen } from '../linear-algebra/eigen.js';
import { numericalRank } from '../linear-algebra/support.js';
import {
  createObjective,
  normaliseRequest,
  type Objective,
  type ObjectiveEvaluation,
  type ReferenceBlocks,
} from '../objectives/index.js';
import { LinearOracle, type OracleResult } from '../oracle/index.js';
import { compressToFace, feasibleFace, liftFromFace, restrictToFace, type FeasibleFace } from '../problem/feasible-face.js';
import { inputHash } from '../problem/hash.js';
import { matrixToJson } from '../problem/json.js';
import type { EntropyRequest, LinearConstraint, Problem } from '../problem/model.js';
import {
  certificateBreakdown,
  linearizationBound,
  referenceFromSupport,
  type BoundBreakdown,
} from '../certificate/bound.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import { ActiveSet } from './active-set.js';
import { derivativeLineSearch } from './line-search.js';
import { TangentQuasiNewton } from './quasi-newton.js';
import { resolveSettings, TUNING } from './settings.js';
import type { Certificate, SolveControl, SolveResult, SolverSettings, StopLimit } from './types.js';

export { SOLVER_VERSION } from '../certificate/version.js';
export { DEFAULT_SETTINGS, resolveSettings } from './settings.js';

interface CertifiedPoint {
  breakdown: BoundBreakdown;
  state: ComplexMatrix;
  reference?: ReferenceBlocks;
  multipliersLower: Float64Array;
  multipliersUpper: Float64Array;
}

/** Multipliers for the full gradient from the oracle's answer on the stripped one (G = stripped + c₀·1 + Σ cᵢΓᵢ). */
function restoreMultipliers(
  oracleResult: OracleResult,
  equalityCoefficients: Float64Array,
): { lower: Float64Array; upper: Float64Array } {
  const lower = Float64Array.from(oracleResult.multipliersLower);
  const upper = Float64Array.from(oracleResult.multipliersUpper);
  equalityCoefficients.forEach((c, i) => {
    if (c > 0) lower[i] += c;
    else if (c < 0) upper[i] -= c;
  });
  return { lower, upper };
}

/** Largest violation of Tr ρ = 1, ρ ⪰ 0 and every constraint, on the original problem. */
export function maxConstraintViolation(problem: Problem, rho: ComplexMatrix): number {
  let worst = Math.abs(trace(rho).re - 1);
  worst = Math.max(worst, -eigvalsh(rho)[0]);
  for (const c of problem.constraints) {
    const v = traceProductReal(c.operator, rho);
    worst = Math.max(worst, c.lower - v, v - c.upper);
  }
  return Math.max(worst, 0);
}

/** Frank–Wolfe with pairwise steps over the feasible density operators, certified by a dual bound. */
export function solve(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings> = {},
  control: SolveControl = {},
): SolveResult {
  const started = performance.now();
  const settings = resolveSettings(partialSettings);
  const entropy = normaliseRequest(request);
  const alpha = entropy.kind === 'von-neumann' ? null : entropy.alpha;
  const hash = inputHash(problem, entropy, settings, SOLVER_VERSION);
  let oracleSeconds = 0;
  const base = {
    entropy: entropy.kind,
    alpha,
    inputHash: hash,
  };
  const elapsed = () => (performance.now() - started) / 1000;
  /** A result without a bound (the status is overridden for infeasible data and early cancellation). */
  const failure = (message: string, iterations: number): SolveResult => ({
    ...base,
    status: 'NUMERICAL_ERROR',
    message,
    certifiedLowerBound: null,
    upperBound: null,
    gap: null,
    toleranceMargin: null,
    statisticalSlack: null,
    maxConstraintViolation: null,
    iterations,
    seconds: elapsed(),
    oracleSeconds,
    certificate: null,
  });

  /** Cancelled before any feasible point existed: no bound can be given. */
  const cancelledBeforeStart = (): SolveResult => ({
    ...failure('cancelled before a feasible starting point was found', 0),
    status: 'LIMIT_REACHED',
    limit: 'cancelled',
  });
  const face = feasibleFace(problem);
  const restricted = restrictToFace(problem, face);
  const oracle = new LinearOracle(face.dimension, restricted.constraints, {
    relativeAccuracy: TUNING.initialOracleAccuracy,
  });
  // Set-up can take a while on large problems: a cancelled request stops before each expensive phase too.
  if (control.isCancelled?.()) return cancelledBeforeStart();
  let clock = performance.now();
  const feasible = oracle.findFeasiblePoint();
  oracleSeconds += (performance.now() - clock) / 1000;
  if (feasible.status === 'INFEASIBLE' && feasible.infeasibility) {
    const f = feasible.infeasibility;
    return {
      ...failure(`no density operator meets the constraints; largest multipliers on: ${f.dominantConstraints.join(', ')}`, 0),
      status: 'INFEASIBLE',
      infeasibility: {
        multipliersLower: Array.from(f.multipliersLower),
        multipliersUpper: Array.from(f.multipliersUpper),
        violation: f.violation,
        dominantConstraints: f.dominantConstraints,
      },
    };
  }
  if (!feasible.point) return failure(`no feasible starting point: ${feasible.message ?? feasible.status}`, 0);

  if (control.isCancelled?.()) return cancelledBeforeStart();
  const objective = createObjective(restricted, entropy);
  const interiorPoint = feasible.point;
  let x = startingPoint(oracle, restricted, face, feasible.point, control.warmStart);
  const firstEvaluation = evaluateSafely(objective, x);
  if (!firstEvaluation) {
    const rank = numericalRank(feasible.point);
    return failure(
      rank < face.dimension
        ? `the feasible set has no full-rank state: its most interior point has rank ${rank} of ${face.dimension} ` +
            '(constraints pin ρ to a face that the exact reductions from the source marginal and spectral edges do not find)'
        : 'the objective is not finite at the starting point',
      0,
    );
  }
  let evaluation: ObjectiveEvaluation = firstEvaluation;
  const atoms = new ActiveSet(x, TUNING.maxAtoms, TUNING.atomWeightFloor);
  let oracleAccuracy: number = TUNING.initialOracleAccuracy;
  let best: CertifiedPoint | null = null;
  let limit: StopLimit | undefined;
  let iterations = 0;
  let gapAtWindowStart = Infinity;
  let windowStart = 0;
  let progressLower = -Infinity;
  let progressIteration = 0;

  // The iterate's eigendecomposition serves the step limits and the certification; computed once per iterate.
  let eigenOf: { state: ComplexMatrix; eigen: HermitianEigen } | null = null;
  const iterateEigen = (): HermitianEigen => {
    if (eigenOf?.state !== x) eigenOf = { state: x, eigen: eigh(x) };
    return eigenOf.eigen;
  };
  const consider = (
    state: ComplexMatrix,
    stateEvaluation: ObjectiveEvaluation,
    y: { lower: Float64Array; upper: Float64Array },
  ) => {
    const breakdown = linearizationBound(
      restricted,
      objective,
      state,
      y.lower,
      y.upper,
      stateEvaluation.reference,
      stateEvaluation,
    );
    if (Number.isFinite(breakdown.lowerBound) && (best === null || breakdown.lowerBound > best.breakdown.lowerBound)) {
      best = {
        breakdown,
        state,
        reference: stateEvaluation.reference,
        multipliersLower: y.lower,
        multipliersUpper: y.upper,
      };
    }
  };
  const certifyAt = (state: ComplexMatrix) => {
    const e = evaluateSafely(objective, state);
    if (!e) return;
    const split = oracle.stripEqualitySpan(e.gradient);
    const clockStart = performance.now();
    const answer = oracle.minimize(split.stripped, { relativeAccuracy: oracleAccuracy });
    oracleSeconds += (performance.now() - clockStart) / 1000;
    if (answer.point || answer.status === 'ITERATION_LIMIT') consider(state, e, restoreMultipliers(answer, split.equalityCoefficients));
  };
  // Near the boundary of the cone the margin grows like 1/λ_min(ρ'). Any full-rank ρ' gives a valid bound, so a
  // few better-conditioned neighbours are tried as well and the best bound is kept: mixtures (1−ε)x + ε·x₀ with
  // the interior point, and x with its small eigenvalues lifted to a level μ (trace and feasibility not needed).
  const certify = (y: { lower: Float64Array; upper: Float64Array }) => {
    consider(x, evaluation, y);
    const { values, vectors } = iterateEigen();
    if (values[0] >= TUNING.wellConditionedEigenvalue) return;
    for (const share of TUNING.certificateMixtures) {
      if (share <= values[0]) continue;
      const state = scale(x, 1 - share);
      addScaledInPlace(state, interiorPoint, share);
      certifyAt(state);
    }
    for (const level of TUNING.certificateLiftLevels) {
      if (level <= values[0]) continue;
      const lifted = Float64Array.from(values, (v) => Math.max(v, level) - v);
      certifyAt(add(x, hermitianPart(multiply(multiply(vectors, ComplexMatrix.diagonal(lifted)), adjoint(vectors)))));
    }
  };

  const qn = new TangentQuasiNewton(TUNING.quasiNewtonMemory);
  let previous: { state: ComplexMatrix; tangentGradient: ComplexMatrix } | null = null;
  /** Exact line search along x + t·d on [0, maxStep]; null when F does not decrease. */
  const lineStep = (direction: ComplexMatrix, slope: number, maxStep: number) => {
    const trials = new Map<number, ObjectiveEvaluation>();
    const search = derivativeLineSearch(
      (step) => {
        const point = x.clone();
        addScaledInPlace(point, direction, step);
        const e = evaluateSafely(objective, point);
        if (!e) return null;
        trials.set(step, e);
        return { step, point, value: e.value, gradient: e.gradient };
      },
      direction,
      slope,
      maxStep,
      TUNING.lineSearchTolerance,
      TUNING.lineSearchEvaluations,
    );
    const chosen = search.best;
    if (!chosen || !(chosen.value <= evaluation.value) || chosen.step <= 0) return null;
    return { step: chosen.step, point: chosen.point, evaluation: trials.get(chosen.step) as ObjectiveEvaluation };
  };

  // Interval operators seen in the tangent space of the equalities, for keeping quasi-Newton steps on active faces.
  const intervalTangents = restricted.constraints.map((c) =>
    c.lower === c.upper ? null : oracle.stripEqualitySpan(c.operator).stripped,
  );
  let quasiNewtonRun = 0;
  let lastDecrease = 0;
  let afterFrankWolfe = false;
  let lastEstimatedGap = Infinity;
  /** One oracle call: gap estimate, certification when it looks close, accuracy tightening on stalls. */
  const consultOracle = (split: ReturnType<LinearOracle['stripEqualitySpan']>): OracleResult | 'stop' | string => {
    quasiNewtonRun = 0;
    const clockStart = performance.now();
    // Far from the optimum a rough answer steps as well as an exact one and costs fewer interior-point iterations.
    const accuracy = Math.max(oracleAccuracy, Math.min(TUNING.coarsestOracleAccuracy, TUNING.oracleAccuracyShare * lastEstimatedGap));
    const answer = oracle.minimize(split.stripped, { relativeAccuracy: accuracy });
    oracleSeconds += (performance.now() - clockStart) / 1000;
    if (!answer.point) return `linear oracle failed: ${answer.message ?? answer.status}`;
    const multipliers = restoreMultipliers(answer, split.equalityCoefficients);
    const estimatedGap = traceProductReal(split.stripped, x) - answer.dualBound;
    lastEstimatedGap = estimatedGap;
    const upper = evaluation.value;
    const bestLower = best ? (best as CertifiedPoint).breakdown.lowerBound : -Infinity;
    if (
      estimatedGap <= TUNING.certifyShare * settings.gapTolerance ||
      oracleCalls % TUNING.certifyEvery === 0 ||
      upper - bestLower <= settings.gapTolerance
    ) {
      certify(multipliers);
      if (best && upper - (best as CertifiedPoint).breakdown.lowerBound <= settings.gapTolerance) return 'stop';
    }
    oracleCalls++;
    // Tighten the oracle when the estimated gap stalls (its rounding then dominates the step).
    if (estimatedGap < 0.9 * gapAtWindowStart) {
      gapAtWindowStart = estimatedGap;
      windowStart = iterations;
    } else if (iterations - windowStart >= TUNING.stallWindow && oracleAccuracy > TUNING.finestOracleAccuracy) {
      oracleAccuracy = Math.max(oracleAccuracy / 10, TUNING.finestOracleAccuracy);
      windowStart = iterations;
      gapAtWindowStart = estimatedGap;
    }
    return answer;
  };
  let oracleCalls = 0;

  for (;;) {
    if (control.isCancelled?.()) {
      limit = 'cancelled';
      break;
    }
    if (iterations >= settings.maxIterations) {
      limit = 'iterations';
      break;
    }
    if (performance.now() - started > settings.timeLimitMs) {
      limit = 'time';
      break;
    }
    const currentLower = best ? (best as CertifiedPoint).breakdown.lowerBound : -Infinity;
    if (currentLower > progressLower + TUNING.progressShare * settings.gapTolerance) {
      progressLower = currentLower;
      progressIteration = iterations;
    } else if (oracleAccuracy <= TUNING.finestOracleAccuracy && iterations - progressIteration >= TUNING.progressWindow) {
      limit = 'no-progress';
      break;
    }
    const gradient = evaluation.gradient as ComplexMatrix;
    const split = oracle.stripEqualitySpan(gradient);
    iterations++;
    // Quasi-Newton pair from the last move, in the tangent space of the equalities.
    if (previous) {
      qn.update(subtract(x, previous.state), subtract(split.stripped, previous.tangentGradient));
    }
    previous = { state: x, tangentGradient: split.stripped };

    // The oracle (gap estimate, certificate, Frank–Wolfe vertex) is skipped while quasi-Newton steps pay off; when
    // they stop paying (a decrease small against the estimated gap), one Frank–Wolfe step is taken instead.
    const quasiNewtonPaying = lastDecrease >= TUNING.quasiNewtonPayoff * lastEstimatedGap;
    const tryQuasiNewton = qn.ready && (quasiNewtonPaying || afterFrankWolfe);
    const oracleDue = !tryQuasiNewton || afterFrankWolfe || quasiNewtonRun >= TUNING.longestQuasiNewtonRun;
    afterFrankWolfe = false;
    let answer: OracleResult | null = null;
    if (oracleDue) {
      const consulted = consultOracle(split);
      if (consulted === 'stop') break;
      if (typeof consulted === 'string') return failure(consulted, iterations);
      answer = consulted;
    }

    if (tryQuasiNewton) {
      const direction = alongActiveIntervals(
        restricted,
        x,
        oracle.stripEqualitySpan(hermitianPart(qn.direction(split.stripped))).stripped,
        intervalTangents,
        TUNING.shortestQuasiNewtonStep,
      );
      const slope = traceProductReal(split.stripped, direction);
      if (slope < 0) {
        const maxStep = Math.min(
          1,
          stepToEigenvalueFloor(iterateEigen(), direction, TUNING.eigenvalueFloor),
          stepToIntervalBounds(restricted, x, direction),
        );
        // A step cut short by the cone or an interval says the optimum sits on a face: Frank–Wolfe handles that.
        const moved = maxStep >= TUNING.shortestQuasiNewtonStep ? lineStep(direction, slope, maxStep) : null;
        if (moved) {
          lastDecrease = evaluation.value - moved.evaluation.value;
          x = moved.point;
          evaluation = moved.evaluation;
          atoms.reset(x);
          quasiNewtonRun++;
          continue;
        }
      }
    }
    // Quasi-Newton gets another chance after this Frank–Wolfe step.
    lastDecrease = 0;
    afterFrankWolfe = true;
    if (answer === null) {
      const consulted = consultOracle(split);
      if (consulted === 'stop') break;
      if (typeof consulted === 'string') return failure(consulted, iterations);
      answer = consulted;
    }
    const vertex = answer.point as ComplexMatrix;

    const toward = hermitianPart(oracle.projectOntoEqualities(vertex));
    const away = atoms.awayAtom(gradient);
    const direction = subtract(toward, away.point);
    const slope = traceProductReal(gradient, direction);
    if (!(slope < 0)) continue;
    const maxStep = Math.min(away.weight, stepToEigenvalueFloor(iterateEigen(), direction, TUNING.eigenvalueFloor));
    const moved = lineStep(direction, slope, maxStep);
    if (!moved) continue;
    atoms.pairwiseStep(away.index, toward, moved.step);
    x = moved.point;
    evaluation = moved.evaluation;
  }

  // Always certify the last iterate too: a limit is a result with a valid bound.
  if (limit !== undefined || best === null) {
    const split = oracle.stripEqualitySpan(evaluation.gradient as ComplexMatrix);
    const answer = oracle.minimize(split.stripped, { relativeAccuracy: oracleAccuracy });
    certify(restoreMultipliers(answer, split.equalityCoefficients));
  }
  if (best === null) return failure('no finite certified bound could be computed', iterations);
  const certified: CertifiedPoint = best;
  const upperBound = evaluation.value;
  const stored = {
    linearizationState: matrixToJson(liftFromFace(face, certified.state)),
    referenceStates: certified.reference
      ? objective.supports.map((support, c) => matrixToJson(referenceFromSupport(support, certified.reference![c])))
      : undefined,
    multipliersLower: Array.from(certified.multipliersLower),
    multipliersUpper: Array.from(certified.multipliersUpper),
  };
  // Claim exactly what a verifier recomputes from the stored numbers.
  const claimed = certificateBreakdown(face, restricted, objective, stored);
  if (!Number.isFinite(claimed.lowerBound)) return failure('the stored certificate does not give a finite bound', iterations);
  const lowerBound = claimed.lowerBound;
  const gap = upperBound - lowerBound;
  const certificate: Certificate = {
    inputHash: hash,
    solverVersion: SOLVER_VERSION,
    settings: { gapTolerance: settings.gapTolerance, maxIterations: settings.maxIterations },
    entropy: entropy.kind,
    alpha,
    ...stored,
    claimedBound: lowerBound,
    toleranceMargin: claimed.margin,
  };
  const finalState = liftFromFace(face, x);
  const status = gap <= settings.gapTolerance ? 'CERTIFIED' : 'LIMIT_REACHED';
  return {
    ...base,
    status,
    limit: status === 'LIMIT_REACHED' ? (limit ?? 'iterations') : undefined,
    message:
      status === 'LIMIT_REACHED'
        ? `stopped by the ${limit ?? 'iteration'} limit with gap ${gap.toExponential(3)} above the requested ${settings.gapTolerance}`
        : undefined,
    certifiedLowerBound: lowerBound,
    upperBound,
    gap,
    toleranceMargin: claimed.margin,
    statisticalSlack: claimed.statisticalSlack,
    maxConstraintViolation: maxConstraintViolation(problem, finalState),
    iterations,
    seconds: elapsed(),
    oracleSeconds,
    certificate,
    finalState: matrixToJson(finalState),
  };
}

/**
 * The largest t with λ_min(x + t·d) ≥ floor. Iterates kept this far inside the cone have gradients that
 * rounding cannot corrupt (an eigenvalue near u·‖x‖ has no correct digits, and neither would log of it).
 */
export function stepToEigenvalueFloor(iterate: HermitianEigen, direction: ComplexMatrix, floor: number): number {
  const { values, vectors } = iterate;
  const n = values.length;
  if (!(values[0] > 0)) return 0;
  const inverseRoot = new Float64Array(n);
  // An iterate already below the floor (a warm start, a face point) may not sink any further.
  floor = Math.min(floor, values[0]);
  const scaled = multiplyAdjointLeft(vectors, multiply(direction, vectors));
  // At the floor itself only directions that do not lower λ_min are allowed (the scaled matrix is then ill-posed).
  for (let i = 0; i < n; i++) inverseRoot[i] = 1 / Math.sqrt(Math.max(values[i] - floor, 1e-300));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      scaled.re[i * n + j] *= -inverseRoot[i] * inverseRoot[j];
      scaled.im[i * n + j] *= -inverseRoot[i] * inverseRoot[j];
    }
  }
  // x − floor + t·d ⪰ 0 ⟺ 1 − t·M ⪰ 0 with M = (Λ−floor)^{-1/2} V†(−d)V (Λ−floor)^{-1/2}.
  const largest = eigvalsh(scaled)[n - 1];
  return largest > 0 ? 1 / largest : Infinity;
}

/**
 * F and ∇F at a point the optimiser believes full rank, or null when rounding has made some branch output
 * numerically singular there (non-finite numbers): the caller treats that point as outside the domain.
 */
function evaluateSafely(objective: Objective, state: ComplexMatrix): (ObjectiveEvaluation & { gradient: ComplexMatrix }) | null {
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

/** The largest t keeping every interval constraint lower ≤ Tr(Γ(x + t·d)) ≤ upper (equalities are kept by d). */
export function stepToIntervalBounds(problem: Problem, x: ComplexMatrix, direction: ComplexMatrix): number {
  return problem.constraints.reduce((step, c) => Math.min(step, intervalRoom(c, x, direction)), Infinity);
}

/** The largest t with lower ≤ Tr(Γ(x + t·d)) ≤ upper for one interval constraint (Infinity for an equality). */
function intervalRoom(c: LinearConstraint, x: ComplexMatrix, direction: ComplexMatrix): number {
  if (c.lower === c.upper) return Infinity;
  const rate = traceProductReal(c.operator, direction);
  if (rate > 0 && Number.isFinite(c.upper)) return Math.max(0, (c.upper - traceProductReal(c.operator, x)) / rate);
  if (rate < 0 && Number.isFinite(c.lower)) return Math.max(0, (c.lower - traceProductReal(c.operator, x)) / rate);
  return Infinity;
}

/**
 * Removes from a tangent direction its components along the interval constraints that would stop it almost at
 * once (active bounds it pushes against), so quasi-Newton steps slide along those faces instead of stalling.
 */
export function alongActiveIntervals(
  problem: Problem,
  x: ComplexMatrix,
  direction: ComplexMatrix,
  tangents: readonly (ComplexMatrix | null)[],
  shortestStep: number,
): ComplexMatrix {
  const active: ComplexMatrix[] = [];
  let d = direction;
  for (let round = 0; round < ACTIVE_SET_ROUNDS; round++) {
    let added = false;
    problem.constraints.forEach((c, i) => {
      const tangent = tangents[i];
      if (tangent === null || active.includes(tangent)) return;
      if (intervalRoom(c, x, d) < shortestStep) {
        active.push(tangent);
        added = true;
      }
    });
    if (!added) break;
    const gram = new Matrix(active.length, active.length);
    const rhs = new Matrix(active.length, 1);
    active.forEach((a, i) => {
      rhs.set(i, 0, traceProductReal(a, direction));
      active.forEach((b, j) => gram.set(i, j, traceProductReal(a, b)));
    });
    const coefficients = solveLinear(gram, rhs, true);
    d = direction.clone();
    active.forEach((a, i) => addScaledInPlace(d, a, -coefficients.get(i, 0)));
  }
  return d;
}
const ACTIVE_SET_ROUNDS = 4;

/** The oracle's interior point, or a warm start projected onto the equalities and pulled inside the cone. */
function startingPoint(
  oracle: LinearOracle,
  restricted: Problem,
  face: FeasibleFace,
  interior: ComplexMatrix,
  warmStart: ComplexMatrix | undefined,
): ComplexMatrix {
  if (!warmStart) return interior;
  const projected = hermitianPart(oracle.projectOntoEqualities(compressToFace(face, warmStart)));
  // Mix toward the interior point until strictly positive definite and inside every interval.
  for (const share of [1e-3, 1e-2, 0.1, 0.5]) {
    const candidate = scale(projected, 1 - share);
    addScaledInPlace(candidate, interior, share);
    if (eigvalsh(candidate)[0] > 0 && maxConstraintViolation(restricted, candidate) === 0) return candidate;
  }
  return interior;
}

export type { Objective };
