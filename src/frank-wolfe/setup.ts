// Set-up: the feasible face, the restricted problem, the oracle, a feasible point, the objective and the
// starting iterate. Ends early (with a result) for infeasible data, cancellation or a degenerate feasible set.
import { addScaledInPlace, hermitianPart, scale, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { numericalRank } from '../linear-algebra/support.js';
import { createObjective, normaliseRequest } from '../objectives/index.js';
import { LinearOracle } from '../oracle/index.js';
import { compressToFace, feasibleFace, restrictToFace, type FeasibleFace } from '../problem/feasible-face.js';
import { inputHash } from '../problem/hash.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import { maxConstraintViolation } from '../problem/violation.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import type { SolveResult } from '../result/types.js';
import { ActiveSet } from './active-set.js';
import { cancelledBeforeStart, infeasibleResult, resultWithoutBound } from './finish.js';
import { TangentQuasiNewton } from './quasi-newton.js';
import { resolveSolverSettings, TUNING, type SolveControl, type SolverSettings } from './settings.js';
import { evaluateSafely, RunClock, type ResultBase, type SolverSetup, type SolverState } from './state.js';

export type SetUpOutcome = { ready: true; setup: SolverSetup; state: SolverState } | { ready: false; result: SolveResult };

export function setUp(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings>,
  control: SolveControl,
): SetUpOutcome {
  const clock = new RunClock();
  const settings = resolveSolverSettings(partialSettings);
  const entropy = normaliseRequest(request);
  const base: ResultBase = {
    entropy: entropy.kind,
    alpha: entropy.kind === 'von-neumann' ? null : entropy.alpha,
    inputHash: inputHash(problem, entropy, settings, SOLVER_VERSION),
  };
  const done = (result: SolveResult): SetUpOutcome => ({ ready: false, result });

  const face = feasibleFace(problem);
  const restricted = restrictToFace(problem, face);
  const oracle = new LinearOracle(face.dimension, restricted.constraints, {
    relativeAccuracy: TUNING.initialOracleAccuracy,
  });
  // Set-up can take a while on large problems: a cancelled request stops before each expensive phase too.
  if (control.isCancelled?.()) return done(cancelledBeforeStart(base, clock));
  const feasible = clock.timeOracle(() => oracle.findFeasiblePoint());
  if (feasible.status === 'INFEASIBLE' && feasible.infeasibility) {
    return done(infeasibleResult(base, clock, feasible.infeasibility));
  }
  if (!feasible.point) {
    return done(resultWithoutBound(base, clock, `no feasible starting point: ${feasible.message ?? feasible.status}`, 0));
  }

  if (control.isCancelled?.()) return done(cancelledBeforeStart(base, clock));
  const objective = createObjective(restricted, entropy);
  const interiorPoint = feasible.point;
  const x = startingPoint(oracle, restricted, face, interiorPoint, control.warmStart);
  const evaluation = evaluateSafely(objective, x);
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
    eigenOf: null,
  };
  return { ready: true, setup, state };
}

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
