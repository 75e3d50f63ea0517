// Independent re-check of a certificate: no optimiser code is imported here (a test enforces it).
import { eigvalsh } from '../linear-algebra/eigen.js';
import { createObjective } from '../objectives/index.js';
import { dropInactiveBounds, reduceProblem } from '../problem/inactive-bounds.js';
import { FaceExposureError, feasibleFace, restrictToFace, type FeasibleFace } from '../problem/feasible-face.js';
import { farkasTest } from '../problem/farkas.js';
import { inputHash } from '../problem/hash.js';
import { matrixFromJson } from '../problem/json.js';
import { FEASIBILITY_TOLERANCE, relativeConstraintViolation } from '../problem/violation.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { Certificate, FarkasCertificate, SolveResult } from '../result/types.js';
import { hasLiftedFaceBound } from './lifted-face.js';
import { certificateBreakdown, readStoredLinearization, type BoundBreakdown, type StoredLinearization } from './bound.js';
import { hasMinTradeoff, minTradeoffFromBreakdown, minTradeoffMismatch } from './min-tradeoff.js';
import { trivialLowerBound } from './trivial-bound.js';
import { upperBoundAt } from './upper-bound.js';
import { SOLVER_VERSION } from './version.js';

export interface VerificationReport {
  valid: boolean;
  /** The bound recomputed from the problem and certificate alone (null when it could not be recomputed). */
  certifiedLowerBound: number | null;
  reason: string;
}

function reject(reason: string, certifiedLowerBound: number | null = null): VerificationReport {
  return { valid: false, certifiedLowerBound, reason };
}

function nonNegativeFinite(values: unknown, length: number): values is number[] {
  return (
    Array.isArray(values) &&
    values.length === length &&
    values.every((v) => typeof v === 'number' && Number.isFinite(v) && v >= 0)
  );
}

/** The fields of a result the verifier reads; absent optional fields are claims not made, and are not checked. */
export type ResultClaims = Pick<SolveResult, 'certificate' | 'certifiedLowerBound' | 'inputHash'> &
  Partial<
    Pick<
      SolveResult,
      'status' | 'upperBound' | 'gap' | 'finalState' | 'trivialBoundUsed' | 'relativeConstraintViolation' | 'infeasibility' | 'minTradeoff'
    >
  >;

/** Stated and recomputed numbers agree when they differ by at most this, relative to 1 + |value|. */
export const REPRODUCTION_TOLERANCE = 1e-12;

/**
 * Re-checks everything a reader of a result relies on: the lower bound from its certificate (or the trivial bound
 * when the result says it used it), the upper bound recomputed as F at finalState together with that state's
 * feasibility, the gap, and the status those numbers allow. INFEASIBLE results get their Farkas certificate checked.
 */
export function verifyResult(problem: Problem, request: EntropyRequest, result: ResultClaims): VerificationReport {
  if (result.minTradeoff !== undefined && !result.certificate) return reject('a min-tradeoff function is stated without the certificate it comes from');
  if (result.status === 'INFEASIBLE') {
    if (!result.infeasibility) return reject('an INFEASIBLE result must carry its Farkas certificate (infeasibility)');
    return verifyInfeasibility(problem, result.infeasibility);
  }
  if (result.status === 'NUMERICAL_ERROR' || result.status === 'FEASIBILITY_UNDECIDED') {
    return reject(`a ${result.status} result states no bound`);
  }
  const lower = result.certifiedLowerBound;
  if (typeof lower !== 'number' || !Number.isFinite(lower)) return reject('the result states no finite lower bound');
  const floor = trivialLowerBound(problem);
  let report: VerificationReport;
  if (result.trivialBoundUsed === true) {
    if (lower !== floor) return reject(`the result says it used the trivial bound, which is ${floor}, not ${lower}`);
    if (result.certificate) {
      const certified = verifyCertificate(problem, request, result.certificate, null);
      if (!certified.valid) return certified;
      const tradeoff = checkMinTradeoff(problem, request, result, certified);
      if (tradeoff !== null) return reject(tradeoff);
      if (result.certificate.claimedBound >= floor) {
        return reject(`the certificate's bound ${result.certificate.claimedBound} is not below the trivial bound ${floor}: it should be reported`);
      }
    } else if (result.status === 'CERTIFIED') {
      return reject('a CERTIFIED result needs a certificate');
    }
    report = { valid: true, certifiedLowerBound: floor, reason: 'trivial bound verified' };
  } else {
    if (!result.certificate) return reject('the result carries no certificate');
    const certified = verifyCertificate(problem, request, result.certificate, lower);
    if (!certified.valid) return certified;
    const tradeoff = checkMinTradeoff(problem, request, result, certified);
    if (tradeoff !== null) return reject(tradeoff, certified.certifiedLowerBound);
    report = { valid: true, certifiedLowerBound: certified.certifiedLowerBound, reason: certified.reason };
    if (lower < floor) return reject(`the bound ${lower} is below the trivial bound ${floor}, which holds for every state`);
  }
  const upper = checkUpperBound(problem, request, result, lower);
  if (upper !== null) return reject(upper, report.certifiedLowerBound);
  return report;
}

/** Null when the stated upper bound, gap and status hold up; otherwise the reason they do not. */
function checkUpperBound(problem: Problem, request: EntropyRequest, result: ResultClaims, lower: number): string | null {
  const { upperBound, gap, status } = result;
  if (upperBound === undefined && gap === undefined) return status === 'CERTIFIED' ? 'a CERTIFIED result needs an upper bound and a gap' : null;
  if (upperBound === null || upperBound === undefined) {
    if (gap !== null && gap !== undefined) return 'a gap is stated without an upper bound';
    return status === 'CERTIFIED' ? 'a CERTIFIED result needs an upper bound' : null;
  }
  if (!result.finalState) return 'an upper bound is stated without the final state it was computed at';
  if (typeof gap !== 'number' || gap !== upperBound - lower) return `the gap ${gap} is not upperBound − certifiedLowerBound = ${upperBound - lower}`;
  if (!(gap >= 0)) return `the gap ${gap} is negative`;
  let state;
  try {
    state = matrixFromJson(result.finalState, 'finalState');
  } catch (error) {
    return (error as Error).message;
  }
  const d = problem.dimensionA * problem.dimensionB;
  if (state.rows !== d || state.cols !== d) return `finalState must be ${d}×${d}`;
  const violation = relativeConstraintViolation(problem, state);
  if (!(violation <= FEASIBILITY_TOLERANCE)) {
    return `finalState violates the constraints by ${violation} (relative to ‖Γ‖_F), above the feasibility tolerance ${FEASIBILITY_TOLERANCE}`;
  }
  let reduced;
  try {
    reduced = reduceOnFace(problem, result.certificate?.faceExposures);
  } catch (error) {
    if (error instanceof FaceExposureError) return error.message;
    throw error;
  }
  const recomputed = upperBoundAt(reduced.face, reduced.restricted, request, result.finalState);
  if (recomputed === null) return 'F is not finite at finalState';
  if (Math.abs(recomputed - upperBound) > REPRODUCTION_TOLERANCE * (1 + Math.abs(upperBound))) {
    return `upperBound ${upperBound} is not F at finalState (recomputed ${recomputed})`;
  }
  if (status === 'CERTIFIED' && result.certificate && !(gap <= result.certificate.settings.gapTolerance)) {
    return `CERTIFIED with gap ${gap} above the requested ${result.certificate.settings.gapTolerance}`;
  }
  return null;
}

/**
 * The feasible face as the verifier recomputes it: the exact reductions, then the certificate's exposing
 * directions, each re-checked (FaceExposureError when one is not positive semidefinite or exposes nothing).
 */
function reduceOnFace(problem: Problem, exposures: Certificate['faceExposures']): { face: FeasibleFace; restricted: Problem; active: Problem } {
  if (exposures === undefined || exposures.length === 0) {
    const reduced = reduceProblem(problem);
    return { ...reduced, active: reduced.active.problem };
  }
  if (!Array.isArray(exposures)) throw new FaceExposureError('faceExposures', 'must be a list of exposures');
  const active = dropInactiveBounds(problem).problem;
  const face = feasibleFace(active, { exposures });
  return { face, restricted: restrictToFace(active, face), active };
}

/** Null when the stated min-tradeoff function is the certificate's (or none is stated); otherwise why not. */
function checkMinTradeoff(problem: Problem, request: EntropyRequest, result: ResultClaims, certified: CertificateReport): string | null {
  const stated = result.minTradeoff;
  if (stated === undefined) return null;
  if (!hasMinTradeoff(problem, request.kind) || !certified.breakdown || !certified.face || !result.certificate) {
    return 'a min-tradeoff function is stated, but only von Neumann certificates of a problem with constraints give one';
  }
  const recomputed = minTradeoffFromBreakdown(problem, certified.face, result.certificate, certified.breakdown);
  return minTradeoffMismatch(stated, recomputed, REPRODUCTION_TOLERANCE);
}

/** A certificate's verdict; a valid one also carries the recomputed breakdown and face (the min-tradeoff check reuses them). */
export type CertificateReport = VerificationReport & { breakdown?: BoundBreakdown; face?: FeasibleFace };

export function verifyCertificate(
  problem: Problem,
  request: EntropyRequest,
  certificate: Certificate,
  reportedBound: number | null = certificate.claimedBound,
): CertificateReport {
  if (certificate.solverVersion !== SOLVER_VERSION) {
    return reject(`certificate from solver version ${certificate.solverVersion}, this verifier is ${SOLVER_VERSION}`);
  }
  const expectedHash = inputHash(problem, request, certificate.settings, SOLVER_VERSION);
  if (certificate.inputHash !== expectedHash) return reject('input hash does not match the problem');
  if (certificate.entropy !== request.kind) return reject(`certificate is for ${certificate.entropy}, not ${request.kind}`);
  const m = problem.constraints.length;
  if (!nonNegativeFinite(certificate.multipliersLower, m) || !nonNegativeFinite(certificate.multipliersUpper, m)) {
    return reject(`multipliers must be ${m} finite non-negative numbers each`);
  }
  const claimed = certificate.claimedBound;
  if (typeof claimed !== 'number' || !Number.isFinite(claimed)) return reject('claimed bound is not a finite number');
  if (reportedBound !== null && reportedBound !== claimed) {
    return reject(`reported bound ${reportedBound} differs from the certificate's claimed bound ${claimed}`);
  }

  let reduced;
  try {
    reduced = reduceOnFace(problem, certificate.faceExposures);
  } catch (error) {
    if (error instanceof FaceExposureError) return reject(`faceExposures: ${error.message}`);
    throw error;
  }
  const { face, restricted, active } = reduced;
  const objective = createObjective(restricted, request);
  if (certificate.linearizationOffFace !== undefined) {
    if (certificate.linearizationOffFace !== true) return reject('linearizationOffFace: must be true or absent');
    if (!face.isometry || face.exposures.length === 0) return reject('linearizationOffFace: needs a face from faceExposures');
    if (!hasLiftedFaceBound(request.kind)) return reject(`linearizationOffFace: no lifted face bound is derived for ${request.kind}`);
  }
  const references = certificate.referenceStates;
  if (objective.request.kind === 'sandwiched-up' && (!references || references.length !== objective.supports.length)) {
    return reject(`sandwiched-up needs ${objective.supports.length} reference states`);
  }
  const whole = certificate.linearizationOffFace ? { problem: active, objective: createObjective(active, request) } : undefined;
  let read: StoredLinearization;
  try {
    read = readStoredLinearization(face, whole?.objective ?? objective, certificate);
  } catch (error) {
    return reject((error as Error).message);
  }
  if (!(eigvalsh(read.state)[0] > 0)) {
    return reject(`linearization state is not full rank on ${certificate.linearizationOffFace ? 'H_A ⊗ H_B' : 'the feasible face'}`);
  }
  for (const blocks of read.reference ?? []) {
    for (const block of blocks) {
      if (!(eigvalsh(block)[0] > 0)) return reject('reference state τ is not full rank on every key block');
    }
  }
  const breakdown = certificateBreakdown(face, restricted, objective, certificate, read, whole);
  if (!Number.isFinite(breakdown.lowerBound)) return reject('recomputed bound is not finite');
  if (breakdown.lowerBound < claimed) {
    return reject(`recomputed bound ${breakdown.lowerBound} is below the claimed ${claimed}`, breakdown.lowerBound);
  }
  return { valid: true, certifiedLowerBound: breakdown.lowerBound, reason: 'certificate verified', breakdown, face };
}

/**
 * Re-checks a Farkas certificate of infeasibility: y⁺, y⁻ ≥ 0 with Σy⁺ℓ − Σy⁻u − λ_max(Σ(y⁺−y⁻)Γ) > 0 on the
 * feasible face recomputed from the problem (every feasible ρ lies on it, so no feasible ρ exists at all).
 */
export function verifyInfeasibility(
  problem: Problem,
  infeasibility: Pick<FarkasCertificate, 'multipliersLower' | 'multipliersUpper'>,
): VerificationReport {
  const m = problem.constraints.length;
  if (!nonNegativeFinite(infeasibility.multipliersLower, m) || !nonNegativeFinite(infeasibility.multipliersUpper, m)) {
    return reject(`Farkas multipliers must be ${m} finite non-negative numbers each`);
  }
  const { face, restricted } = reduceProblem(problem);
  const { violation, rounding } = farkasTest(restricted.constraints, face.dimension, infeasibility.multipliersLower, infeasibility.multipliersUpper);
  if (!(violation > rounding)) {
    return reject(`Farkas violation ${violation} is not above the rounding level ${rounding}`);
  }
  return { valid: true, certifiedLowerBound: null, reason: `infeasibility verified (violation ${violation})` };
}
