// Set-up: the feasible face, the restricted problem, the oracle, a feasible point, the objective and the
// starting iterate. Ends early (with a result) for infeasible data, cancellation or a degenerate feasible set.
import { addScaledInPlace, hermitianPart, scale, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { numericalRank } from '../linear-algebra/support.js';
import { createObjective, normaliseRequest } from '../objectives/index.js';
import { exposeIfRankDeficient, LinearOracle } from '../oracle/index.js';
import { faceBoundApplies } from '../certificate/lifted-face.js';
import { compressToFace, liftFromFace, type FeasibleFace } from '../problem/feasible-face.js';
import { farkasTest } from '../problem/farkas.js';
import { equalityFarkas } from '../problem/equality-farkas.js';
import { reduceProblem } from '../problem/inactive-bounds.js';
import { inputHash } from '../problem/hash.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import { FEASIBILITY_TOLERANCE, relativeConstraintViolation } from '../problem/violation.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import type { SolveResult } from '../result/types.js';
import { ActiveSet } from './active-set.js';
import { infeasibleResult, resultWithoutBound } from './finish.js';
import { TangentQuasiNewton } from './quasi-newton.js';
import { resolveSolverSettings, TUNING, type SolveControl, type SolverSettings } from './settings.js';
import { evaluateSafely, type ResultBase, type RunClock, type SolverSetup, type SolverState } from './state.js';

/** `evaluationMs`: what one objective evaluation (with gradient) cost at the start, to budget the result's assembly. */
export type SetUpOutcome =
  | { ready: true; setup: SolverSetup; state: SolverState; evaluationMs: number }
  | { ready: false; result: SolveResult };

/** Set-up of a run; SolveInterrupted thrown by a checkpoint is caught by the caller. */
export function setUp(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings>,
  control: SolveControl,
  clock: RunClock,
  base: ResultBase,
  /** Whether a face found by an exposing direction may replace the full space (docs/faces.md). */
  exposeFace = true,
): SetUpOutcome {
  const settings = resolveSolverSettings(partialSettings);
  const entropy = normaliseRequest(request);
  const done = (result: SolveResult): SetUpOutcome => ({ ready: false, result });
  const { checkpoint } = clock;

  checkpoint();
  const reduced = reduceProblem(problem, checkpoint);
  const { active } = reduced;
  let { face, restricted } = reduced;
  if (active.infeasibility) return done(infeasibleResult(base, clock, active.infeasibility));
  let oracle = new LinearOracle(face.dimension, restricted.constraints, {
    relativeAccuracy: TUNING.initialOracleAccuracy,
    checkpoint,
  });
  let feasible = clock.timeOracle(() => oracle.findFeasiblePoint());
  // No full-rank feasible state: restate the problem on the face its exposing direction finds (docs/faces.md).
  const exposed = exposeFace
    ? clock.timeOracle(() =>
        exposeIfRankDeficient(active.problem, () => faceBoundApplies(active.problem, entropy), feasible, { checkpoint, settings: { relativeAccuracy: TUNING.initialOracleAccuracy } }),
      )
    : null;
  // The exposed face replaces the full space even when its continuity margin keeps it from certifying the request:
  // on d64#3 the face reached gap 3.5e-4 in 20 s against 5e-2 in the full space; `solve` gives an uncertified face
  // result's remaining time to the full space and keeps the smaller gap (docs/faces.md, "What a face costs the bound").
  if (exposed) ({ face, restricted, oracle, feasible } = exposed);
  const undecided = (message: string) =>
    done({ ...resultWithoutBound(base, clock, message, 0), status: 'FEASIBILITY_UNDECIDED' });
  if (feasible.status === 'INFEASIBLE' && feasible.infeasibility) {
    const f = feasible.infeasibility;
    const test = farkasTest(restricted.constraints, face.dimension, f.multipliersLower, f.multipliersUpper);
    if (test.violation > test.rounding) return done(infeasibleResult(base, clock, f));
    return undecided(
      `the constraints look inconsistent, but the Farkas violation ${test.violation} is not above its rounding level ` +
        `${test.rounding}: double precision cannot decide whether any density operator meets them`,
    );
  }
  // The oracle's point must meet the constraints; if it does not, the data contradict themselves somewhere the
  // oracle did not prove, and the equalities alone often do.
  // Measured on H_A ⊗ H_B: operators restricted to the face can be tiny, and their relative violations mere noise.
  const pointViolation = feasible.point
    ? relativeConstraintViolation(active.problem, liftFromFace(face, feasible.point))
    : Infinity;
  if (!(pointViolation <= FEASIBILITY_TOLERANCE)) {
    checkpoint();
    const farkas = equalityFarkas(restricted.constraints, face.dimension);
    if (farkas) {
      const dominant = dominantLabels(restricted, farkas.multipliersLower, farkas.multipliersUpper);
      return done(infeasibleResult(base, clock, { ...farkas, dominantConstraints: dominant }));
    }
    if (feasible.point) {
      return undecided(
        `the best point found violates the constraints by ${pointViolation.toExponential(3)} (relative to ‖Γ‖_F, ` +
          `tolerance ${FEASIBILITY_TOLERANCE}) and no Farkas certificate of infeasibility verifies above rounding`,
      );
    }
    return done(resultWithoutBound(base, clock, `no feasible starting point: ${feasible.message ?? feasible.status}`, 0));
  }
  const interiorPoint = feasible.point as ComplexMatrix;

  checkpoint();
  const objective = createObjective(restricted, entropy);
  const x = startingPoint(oracle, restricted, face, interiorPoint, control.warmStart);
  checkpoint();
  const evaluationStart = clock.elapsedMs();
  const evaluation = evaluateSafely(objective, x);
  const evaluationMs = clock.elapsedMs() - evaluationStart;
  if (!evaluation) {
    const rank = numericalRank(interiorPoint);
    const message =
      rank < face.dimension
        ? `the feasible set has no full-rank state: its most interior point has rank ${rank} of ${face.dimension} ` +
          '(constraints pin ρ to a face that the exact reductions from the source marginal and spectral edges do not find)'
        : 'the objective is not finite at the starting point';
    return done(resultWithoutBound(base, clock, message, 0));
  }
  const setup: SolverSetup = {
    problem,
    activeProblem: active.problem,
    settings,
    control,
    entropy,
    base,
    clock,
    face,
    restricted,
    oracle,
    objective,
    interiorPoint,
    notes: [...active.dropped, ...quantityNotes(entropy)],
    intervalTangents: restricted.constraints.map((c) => (c.lower === c.upper ? null : oracle.stripEqualitySpan(c.operator).stripped)),
  };
  const state: SolverState = {
    x,
    evaluation,
    atoms: new ActiveSet(x, TUNING.maxAtoms, TUNING.atomWeightFloor),
    quasiNewton: new TangentQuasiNewton(TUNING.quasiNewtonMemory),
    previous: null,
    best: null,
    limit: undefined,
    iterations: 0,
    oracleAccuracy: TUNING.initialOracleAccuracy,
    oracleCalls: 0,
    gapAtWindowStart: Infinity,
    windowStart: 0,
    progressLower: -Infinity,
    progressIteration: 0,
    quasiNewtonRun: 0,
    lastDecrease: 0,
    afterFrankWolfe: false,
    lastEstimatedGap: Infinity,
    faceNewtonRetryAt: 0,
    faceNewtonMisses: 0,
    lastOracleGap: Infinity,
    noProgressCause: undefined,
    faceNewtonEvaluations: 0,
    centredPoints: [],
    eigenOf: null,
  };
  return { ready: true, setup, state, evaluationMs };
}

/** The fields every result repeats (also for results of runs interrupted during set-up). */
export function resultBase(problem: Problem, request: EntropyRequest, partialSettings: Partial<SolverSettings>): ResultBase {
  const settings = resolveSolverSettings(partialSettings);
  const entropy = normaliseRequest(request);
  return {
    entropy: entropy.kind,
    alpha: entropy.kind === 'von-neumann' ? null : entropy.alpha,
    inputHash: inputHash(problem, entropy, settings, SOLVER_VERSION),
  };
}

/** Properties of the requested quantity itself that a reader would otherwise take for a solver failure. */
function quantityNotes(entropy: Required<EntropyRequest>): string[] {
  if (entropy.kind !== 'petz-down' || entropy.alpha !== 2) return [];
  return [
    'Petz-down at α = 2 evaluates Q̄_0(X‖Z(X)) = Tr(Π_X·Z(X)) with Π_X the support projector of X: for a classical ' +
      'key given a full-rank eavesdropper marginal it equals Tr X, so the entropy is always 0 (minus the score ' +
      'shift); this is a property of the quantity, not a solver failure',
  ];
}

/** Labels of the constraints with the largest Farkas multipliers. */
function dominantLabels(problem: Problem, lower: ArrayLike<number>, upper: ArrayLike<number>): string[] {
  return problem.constraints
    .map((c, i) => ({ label: c.label, size: lower[i] + upper[i] }))
    .filter((e) => e.size > 0)
    .sort((a, b) => b.size - a.size)
    .slice(0, 4)
    .map((e) => e.label);
}

/**
 * A warm start may miss the constraints by this much relative to ‖Γ‖_F: the rounding of its projection onto the
 * equalities (Tr ρ = 1 is met only to rounding, so an exact test dropped every warm start), a thousandth of the
 * result's FEASIBILITY_TOLERANCE.
 */
const WARM_START_TOLERANCE = 1e-12;

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
    if (eigvalsh(candidate)[0] > 0 && relativeConstraintViolation(restricted, candidate) <= WARM_START_TOLERANCE) return candidate;
  }
  return interior;
}
