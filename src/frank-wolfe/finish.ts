// Result assembly: the certified result from the best linearization, and the results that carry no bound.
import { liftFromFace } from '../problem/feasible-face.js';
import { matrixFromJson, matrixToJson } from '../problem/json.js';
import type { Problem } from '../problem/model.js';
import { constraintViolations, FEASIBILITY_TOLERANCE } from '../problem/violation.js';
import { certificateBreakdown, readStoredLinearization, referenceFromSupport, type BoundBreakdown } from '../certificate/bound.js';
import { DOUBLE_DOUBLE_LIFT_CANCELLED_DIMENSION, fitsDoubleDoubleLift } from '../certificate/double-double-lift.js';
import { faceBlocks, hasLiftedFaceBound, liftedPoint, liftedPointTerms, liftsInDoubleDouble, liftWeights } from '../certificate/lifted-face.js';
import { conjugateAdjoint, hermitianPart, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { createObjective, type Objective, type ReferenceBlocks } from '../objectives/index.js';
import { hasMinTradeoff, minTradeoffFromBreakdown } from '../certificate/min-tradeoff.js';
import { trivialLowerBound } from '../certificate/trivial-bound.js';
import { upperBoundAt } from '../certificate/upper-bound.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import type { Certificate, MinTradeoffFunction, SolveResult } from '../result/types.js';
import { restoreMultipliers } from './certify.js';
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

/** INFEASIBLE with a Farkas certificate (from the pre-processing, the oracle or the equalities). */
export function infeasibleResult(
  base: ResultBase,
  clock: RunClock,
  farkas: { multipliersLower: ArrayLike<number>; multipliersUpper: ArrayLike<number>; violation: number; dominantConstraints: string[] },
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

type StoredCertificate = Pick<
  Certificate,
  'linearizationState' | 'referenceStates' | 'multipliersLower' | 'multipliersUpper' | 'linearizationOffFace'
>;

/**
 * Multipliers for the gradient at the lifted point: the face state's own were optimal for the face's gradient, and the
 * lift moves the face block of ∇F by about as much as it moves F (d8#7 Petz-up at μ = 1e-8: 1.8e-5 below F with the
 * face's multipliers, 3.1e-6 with these). Null when the face oracle gives no optimal answer, and for a cancelled run
 * (result assembly does not poll the deadline: an oracle that did would throw away the result it is assembling).
 */
function liftedMultipliers(
  setup: SolverSetup,
  state: SolverState,
  /** The matrix the lifted bound pairs with σ at the lifted point, on the whole space. */
  paired: ComplexMatrix,
): Pick<StoredCertificate, 'multipliersLower' | 'multipliersUpper'> | null {
  if (state.limit === 'cancelled') return null;
  const faceGradient = hermitianPart(conjugateAdjoint(setup.face.isometry as ComplexMatrix, paired));
  const split = setup.oracle.stripEqualitySpan(faceGradient);
  const answer = setup.clock.timeOracle(() =>
    setup.oracle.minimize(split.stripped, { relativeAccuracy: state.oracleAccuracy, checkpoint: () => {} }),
  );
  if (answer.status !== 'OPTIMAL') return null;
  const y = restoreMultipliers(answer, split.equalityCoefficients);
  return { multipliersLower: Array.from(y.lower), multipliersUpper: Array.from(y.upper) };
}

/** τ' at a lifted point: the inner optimum there, without the gradient a full evaluation would also form. */
function referenceAt(objective: Objective, point: ComplexMatrix): ReferenceBlocks | undefined {
  try {
    const evaluation = objective.evaluate(point, { withGradient: false, assumeFullRank: true });
    return Number.isFinite(evaluation.value) ? evaluation.reference : undefined;
  } catch (error) {
    // As `evaluateSafely`: an output singular to rounding makes the point unusable, not the run.
    if (error instanceof RangeError) return undefined;
    throw error;
  }
}

/**
 * On an exposed face, the lifted linearization bound at the certified face state lifted off the face by each of
 * LIFT_WEIGHTS (docs/faces.md, "The lifted linearization bound"), with multipliers for each lifted gradient; the
 * best, when it beats the continuity margin's.
 */
function liftedCertificate(
  setup: SolverSetup,
  state: SolverState,
  certified: CertifiedPoint,
  onFace: StoredCertificate,
  faceBound: number,
): { stored: StoredCertificate; claimed: BoundBreakdown } | null {
  const { face, restricted, objective, entropy, activeProblem } = setup;
  if (face.exposures.length === 0 || !face.isometry || !hasLiftedFaceBound(entropy.kind)) return null;
  const whole = { problem: activeProblem, objective: createObjective(activeProblem, entropy) };
  // A lift in double-double takes seconds at d = 64 (about 2.5 s a weight for sandwiched-up): a run stopped by its time
  // limit tries the largest weight alone (the most forgiving where the face run did not finish: d64#4 sandwiched-up
  // 2.9e-3, 1.0e-1 at the middle one), within the time `solve` reserved for it; a cancelled run frees its thread
  // instead, or tries the middle weight where that is quick.
  let weights = liftWeights(whole.objective);
  if (liftsInDoubleDouble(whole.objective)) {
    if (state.limit === 'time') weights = [weights[0]];
    if (state.limit === 'cancelled') {
      if (!fitsDoubleDoubleLift(whole.objective, DOUBLE_DOUBLE_LIFT_CANCELLED_DIMENSION)) return null;
      weights = [weights[Math.floor(weights.length / 2)]];
    }
  }
  const blocks = faceBlocks(face);
  let best: { stored: StoredCertificate; claimed: BoundBreakdown } | null = null;
  for (const weight of weights) {
    // Past the time limit one lifted certificate is enough (each weight costs seconds at d = 64; assembly is not
    // interrupted): d64#4 Petz-up, stopped on no-progress near its limit, had overrun it by 9.5 s with five.
    if (best && setup.clock.elapsedMs() > setup.settings.timeLimitMs) break;
    const point = liftedPoint(face, blocks, certified.state, weight);
    // Sandwiched-up: τ' is the inner optimum at the lifted point, on the whole space's output supports.
    const reference = entropy.kind === 'sandwiched-up' ? referenceAt(whole.objective, point) : undefined;
    if (entropy.kind === 'sandwiched-up' && !reference) continue;
    const draft = {
      ...onFace,
      linearizationState: matrixToJson(point),
      referenceStates: reference
        ? whole.objective.supports.map((support, c) => matrixToJson(referenceFromSupport(support, reference[c])))
        : undefined,
      linearizationOffFace: true,
    };
    try {
      // Read back as the verifier reads it, and evaluated once: the multipliers and the claimed bound share it.
      const read = readStoredLinearization(face, whole.objective, draft);
      // The verifier refuses a point whose computed smallest eigenvalue is not positive; so does the solver.
      if (!(eigvalsh(read.state)[0] > 0)) continue;
      const terms = liftedPointTerms(whole.objective, read.state, read.reference, blocks);
      const multipliers = liftedMultipliers(setup, state, terms.gradient);
      const stored = multipliers ? { ...draft, ...multipliers } : draft;
      const claimed = certificateBreakdown(face, restricted, objective, stored, read, whole, terms);
      if (claimed.lowerBound > (best?.claimed.lowerBound ?? faceBound)) best = { stored, claimed };
    } catch (error) {
      // A kernel's RangeError at one lifted point (non-finite data) leaves the others.
      if (error instanceof RangeError) continue;
      throw error;
    }
  }
  return best;
}

/**
 * The result of a run that has a bound. The lower bound is the certificate's (exactly what a verifier recomputes
 * from the stored numbers), raised to the trivial bound when lower or missing. The upper bound is F at the final
 * state when that state meets every constraint within FEASIBILITY_TOLERANCE; CERTIFIED needs it, and 0 ≤ gap ≤ request.
 */
export function assembleResult(setup: SolverSetup, state: SolverState): SolveResult {
  const { base, clock, face, restricted, objective, settings, problem } = setup;
  const trivialBound = trivialLowerBound(problem);
  let certificate: Certificate | null = null;
  let certifiedBound = -Infinity;
  let margin: number | null = null;
  let statisticalSlack: number | null = null;
  let minTradeoff: MinTradeoffFunction | undefined;
  if (state.best !== null) {
    const certified: CertifiedPoint = state.best;
    let stored: StoredCertificate = {
      linearizationState: matrixToJson(liftFromFace(face, certified.state)),
      referenceStates: certified.reference
        ? objective.supports.map((support, c) => matrixToJson(referenceFromSupport(support, certified.reference![c])))
        : undefined,
      multipliersLower: Array.from(certified.multipliersLower),
      multipliersUpper: Array.from(certified.multipliersUpper),
    };
    // With the settings the certificate will carry: the curvature clusters stop where the verifier's do.
    let claimed = certificateBreakdown(face, restricted, objective, { ...stored, settings: certificateSettings(settings) });
    const lifted = liftedCertificate(setup, state, certified, stored, claimed.lowerBound);
    if (lifted) ({ stored, claimed } = lifted);
    if (Number.isFinite(claimed.lowerBound)) {
      certifiedBound = claimed.lowerBound;
      margin = claimed.margin;
      statisticalSlack = claimed.statisticalSlack;
      certificate = {
        inputHash: base.inputHash,
        solverVersion: SOLVER_VERSION,
        settings: certificateSettings(settings),
        entropy: base.entropy,
        alpha: base.alpha,
        ...stored,
        claimedBound: certifiedBound,
        toleranceMargin: claimed.margin,
        ...(face.exposures.length > 0 ? { faceExposures: face.exposures } : {}),
      };
      // From the very breakdown claimed, so the verifier's recomputation reproduces it bit for bit.
      if (hasMinTradeoff(problem, base.entropy)) minTradeoff = minTradeoffFromBreakdown(problem, face, stored, claimed);
    }
  }
  // Without a certificate only a limit leaves a result with a bound (the trivial one); anything else failed.
  if (certificate === null && state.limit === undefined) {
    return resultWithoutBound(base, clock, 'no finite certified bound could be computed', state.iterations);
  }
  const trivialBoundUsed = !(certifiedBound >= trivialBound);
  const lowerBound = trivialBoundUsed ? trivialBound : certifiedBound;

  const finalState = matrixToJson(liftFromFace(face, state.x));
  const lifted = matrixFromJson(finalState, 'finalState');
  const violations = constraintViolations(problem, lifted);
  const relativeViolation = violations.relative;
  const feasible = relativeViolation <= FEASIBILITY_TOLERANCE;
  const value = feasible ? upperBoundAt(face, restricted, setup.entropy, finalState) : null;
  // F at a state within tolerance can dip below a valid lower bound only by rounding; such an upper bound says nothing.
  const upperBound = value !== null && value >= lowerBound ? value : null;
  const gap = upperBound === null ? null : upperBound - lowerBound;
  const status = gap !== null && gap <= settings.gapTolerance ? 'CERTIFIED' : 'LIMIT_REACHED';
  // A run that stopped certified but whose final state fails the feasibility check hit no limit: none is named.
  const limit = status === 'LIMIT_REACHED' ? state.limit : undefined;
  const stopped = limit === undefined ? 'the run ended' : `stopped by the ${limit} limit`;
  const notes = [...setup.notes];
  if (trivialBoundUsed) {
    notes.push(
      certificate === null
        ? `no certificate was computed before the run stopped (${limit ?? 'no limit'}): the bound is the trivial bound ${trivialBound}, which holds for every state`
        : `the certificate's bound ${certifiedBound} lies below the trivial bound ${trivialBound}, which holds for every state and is reported instead`,
    );
  }
  // On an exposed face the face's own bound may meet the request while the cost of states off the face does not:
  // say how much of the gap that cost is, so a floor set by the data's leak is not mistaken for slow convergence.
  const offFace = state.best !== null ? state.best.breakdown.lowerBound - certifiedBound : 0;
  if (status === 'LIMIT_REACHED' && face.exposures.length > 0 && state.best !== null && certificate !== null && offFace > 0) {
    const route = certificate.linearizationOffFace ? 'the lifted linearization bound' : 'the continuity margin';
    notes.push(
      `on the exposed face the certificate's own bound is ${(state.evaluation.value - state.best.breakdown.lowerBound).toExponential(3)} ` +
        `below F; states off the face (weight at most ${(face.leak ?? 0).toExponential(2)}) cost ${offFace.toExponential(3)} more ` +
        `through ${route} (docs/faces.md)`,
    );
  }
  let message: string | undefined;
  if (status === 'LIMIT_REACHED') {
    message =
      upperBound !== null
        ? `${stopped} with gap ${(gap as number).toExponential(3)} above the requested ${settings.gapTolerance}`
        : !feasible
          ? `${stopped}; the final state violates the constraints by ${relativeViolation.toExponential(3)} ` +
            `(relative to ‖Γ‖_F, tolerance ${FEASIBILITY_TOLERANCE}), so no upper bound is stated`
          : value !== null && lowerBound - value > settings.gapTolerance
            ? // A bound this far above F at a state meeting every constraint within tolerance holds only if the data
              // admit no exact solution there (a feasible set without interior, met to rounding: d8#38 Petz-up).
              `${stopped}; F at the final state, which meets every constraint within the tolerance, lies ` +
              `${(lowerBound - value).toExponential(3)} below the lower bound: the data appear to have no full-rank feasible ` +
              `state and to be consistent only to rounding, where such a bound is valid but says nothing; no upper bound is stated`
            : `${stopped}; F at the final state is not above the lower bound within rounding, so no upper bound is stated`;
  }
  return {
    ...base,
    status,
    limit,
    noProgressCause: limit === 'no-progress' ? state.noProgressCause : undefined,
    message,
    certifiedLowerBound: lowerBound,
    upperBound,
    gap,
    toleranceMargin: margin,
    statisticalSlack,
    maxConstraintViolation: violations.absolute,
    relativeConstraintViolation: relativeViolation,
    feasibilityTolerance: FEASIBILITY_TOLERANCE,
    trivialBound,
    trivialBoundUsed,
    notes: notes.length > 0 ? notes : undefined,
    iterations: state.iterations,
    seconds: clock.elapsedMs() / 1000,
    oracleSeconds: clock.oracleSeconds,
    certificate,
    finalState,
    minTradeoff,
  };
}

/** Interrupted before an iterate existed: the trivial bound is the best valid bound there is. */
export function interruptedBeforeStart(base: ResultBase, clock: RunClock, problem: Problem, limit: 'time' | 'cancelled'): SolveResult {
  const trivialBound = trivialLowerBound(problem);
  return {
    ...resultWithoutBound(
      base,
      clock,
      limit === 'time'
        ? 'the time limit passed during set-up, before a feasible starting point was found'
        : 'cancelled before a feasible starting point was found',
      0,
    ),
    status: 'LIMIT_REACHED',
    limit,
    certifiedLowerBound: trivialBound,
    trivialBound,
    trivialBoundUsed: true,
    notes: [`the bound is the trivial bound ${trivialBound}, which holds for every state`],
  };
}

/** The solver settings a certificate records (the verifier reads its gap tolerance, bound.ts). */
function certificateSettings(settings: SolverSetup['settings']): Certificate['settings'] {
  return { gapTolerance: settings.gapTolerance, maxIterations: settings.maxIterations };
}
