// Result assembly: the certified result from the best linearization, and the results that carry no bound.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { OracleResult } from '../oracle/index.js';
import { liftFromFace } from '../problem/feasible-face.js';
import { matrixToJson } from '../problem/json.js';
import { maxConstraintViolation } from '../problem/violation.js';
import { certificateBreakdown, referenceFromSupport } from '../certificate/bound.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import type { Certificate, SolveResult } from '../result/types.js';
import type { CertifiedPoint, ResultBase, RunClock, SolverSetup, SolverState } from './state.js';

/** A result without a bound (the status is overridden for infeasible data and early cancellation). */
export function resultWithoutBound(base: ResultBase, clock: RunClock, message: string, iterations: number): SolveResult {
  return {
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
    seconds: clock.elapsedMs() / 1000,
    oracleSeconds: clock.oracleSeconds,
    certificate: null,
  };
}

/** Cancelled before any feasible point existed: no bound can be given. */
export function cancelledBeforeStart(base: ResultBase, clock: RunClock): SolveResult {
  return {
    ...resultWithoutBound(base, clock, 'cancelled before a feasible starting point was found', 0),
    status: 'LIMIT_REACHED',
    limit: 'cancelled',
  };
}

/** INFEASIBLE with the oracle's Farkas certificate. */
export function infeasibleResult(
  base: ResultBase,
  clock: RunClock,
  farkas: NonNullable<OracleResult['infeasibility']>,
): SolveResult {
  return {
    ...resultWithoutBound(
      base,
      clock,
      `no density operator meets the constraints; largest multipliers on: ${farkas.dominantConstraints.join(', ')}`,
      0,
    ),
    status: 'INFEASIBLE',
    infeasibility: {
      multipliersLower: Array.from(farkas.multipliersLower),
      multipliersUpper: Array.from(farkas.multipliersUpper),
      violation: farkas.violation,
      dominantConstraints: farkas.dominantConstraints,
    },
  };
}

/** The certified (or limited) result: claims exactly what a verifier recomputes from the stored numbers. */
export function assembleResult(setup: SolverSetup, state: SolverState): SolveResult {
  const { base, clock, face, restricted, objective, settings } = setup;
  if (state.best === null) return resultWithoutBound(base, clock, 'no finite certified bound could be computed', state.iterations);
  const certified: CertifiedPoint = state.best;
  const upperBound = state.evaluation.value;
  const stored = {
    linearizationState: matrixToJson(liftFromFace(face, certified.state)),
    referenceStates: certified.reference
      ? objective.supports.map((support, c) => matrixToJson(referenceFromSupport(support, certified.reference![c])))
      : undefined,
    multipliersLower: Array.from(certified.multipliersLower),
    multipliersUpper: Array.from(certified.multipliersUpper),
  };
  const claimed = certificateBreakdown(face, restricted, objective, stored);
  if (!Number.isFinite(claimed.lowerBound)) {
    return resultWithoutBound(base, clock, 'the stored certificate does not give a finite bound', state.iterations);
  }
  const lowerBound = claimed.lowerBound;
  const gap = upperBound - lowerBound;
  const certificate: Certificate = {
    inputHash: base.inputHash,
    solverVersion: SOLVER_VERSION,
    settings: { gapTolerance: settings.gapTolerance, maxIterations: settings.maxIterations },
    entropy: base.entropy,
    alpha: base.alpha,
    ...stored,
    claimedBound: lowerBound,
    toleranceMargin: claimed.margin,
  };
  const finalState: ComplexMatrix = liftFromFace(face, state.x);
  const status = gap <= settings.gapTolerance ? 'CERTIFIED' : 'LIMIT_REACHED';
  const limit = state.limit;
  return {
    ...base,
    status,
    limit: status === 'LIMIT_REACHED' ? (limit ?? 'iterations') : undefined,
    noProgressCause: status === 'LIMIT_REACHED' && limit === 'no-progress' ? state.noProgressCause : undefined,
    message:
      status === 'LIMIT_REACHED'
        ? `stopped by the ${limit ?? 'iteration'} limit with gap ${gap.toExponential(3)} above the requested ${settings.gapTolerance}`
        : undefined,
    certifiedLowerBound: lowerBound,
    upperBound,
    gap,
    toleranceMargin: claimed.margin,
    statisticalSlack: claimed.statisticalSlack,
    maxConstraintViolation: maxConstraintViolation(setup.problem, finalState),
    iterations: state.iterations,
    seconds: clock.elapsedMs() / 1000,
    oracleSeconds: clock.oracleSeconds,
    certificate,
    finalState: matrixToJson(finalState),
  };
}
