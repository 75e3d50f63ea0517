// Independent re-check of a certificate: no optimiser code is imported here (a test enforces it).
import { addScaledInPlace, ComplexMatrix, frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { createObjective } from '../objectives/index.js';
import { feasibleFace, restrictToFace } from '../problem/feasible-face.js';
import { inputHash } from '../problem/hash.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { Certificate, FarkasCertificate, SolveResult } from '../result/types.js';
import { certificateBreakdown, readStoredLinearization, type StoredLinearization } from './bound.js';
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

/** Recomputes the bound of a result's certificate from the problem; rejects hash mismatches and overclaims. */
export function verifyResult(
  problem: Problem,
  request: EntropyRequest,
  result: Pick<SolveResult, 'certificate' | 'certifiedLowerBound' | 'inputHash'>,
): VerificationReport {
  const certificate = result.certificate;
  if (!certificate) return reject('the result carries no certificate');
  return verifyCertificate(problem, request, certificate, result.certifiedLowerBound);
}

export function verifyCertificate(
  problem: Problem,
  request: EntropyRequest,
  certificate: Certificate,
  reportedBound: number | null = certificate.claimedBound,
): VerificationReport {
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

  const face = feasibleFace(problem);
  const restricted = restrictToFace(problem, face);
  const objective = createObjective(restricted, request);
  const references = certificate.referenceStates;
  if (objective.request.kind === 'sandwiched-up' && (!references || references.length !== objective.supports.length)) {
    return reject(`sandwiched-up needs ${objective.supports.length} reference states`);
  }
  let read: StoredLinearization;
  try {
    read = readStoredLinearization(face, objective, certificate);
  } catch (error) {
    return reject((error as Error).message);
  }
  if (!(eigvalsh(read.state)[0] > 0)) return reject('linearization state is not full rank on the feasible face');
  for (const blocks of read.reference ?? []) {
    for (const block of blocks) {
      if (!(eigvalsh(block)[0] > 0)) return reject('reference state τ is not full rank on every key block');
    }
  }
  const breakdown = certificateBreakdown(face, restricted, objective, certificate, read);
  if (!Number.isFinite(breakdown.lowerBound)) return reject('recomputed bound is not finite');
  if (breakdown.lowerBound < claimed) {
    return reject(`recomputed bound ${breakdown.lowerBound} is below the claimed ${claimed}`, breakdown.lowerBound);
  }
  return { valid: true, certifiedLowerBound: breakdown.lowerBound, reason: 'certificate verified' };
}

/** Relative size below which a recomputed Farkas violation is not trusted as positive (rounding of λ_max). */
const FARKAS_ROUNDING_FACTOR = BACKWARD_ERROR_CONSTANT;

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
  const face = feasibleFace(problem);
  const restricted = restrictToFace(problem, face);
  const combination = ComplexMatrix.zeros(face.dimension);
  let bound = 0;
  let scale = 0;
  restricted.constraints.forEach((c, i) => {
    const yLower = infeasibility.multipliersLower[i];
    const yUpper = infeasibility.multipliersUpper[i];
    if (yLower === 0 && yUpper === 0) return;
    addScaledInPlace(combination, c.operator, yLower - yUpper);
    if (yLower !== 0) bound += yLower * c.lower;
    if (yUpper !== 0) bound -= yUpper * c.upper;
    scale += (yLower + yUpper) * (frobeniusNorm(c.operator) + Math.abs(c.lower) + Math.abs(c.upper));
  });
  const largest = eigvalsh(combination)[face.dimension - 1];
  const violation = bound - largest;
  const rounding = FARKAS_ROUNDING_FACTOR * face.dimension * UNIT_ROUNDOFF * scale;
  if (!(violation > rounding)) {
    return reject(`Farkas violation ${violation} is not above the rounding level ${rounding}`);
  }
  return { valid: true, certifiedLowerBound: null, reason: `infeasibility verified (violation ${violation})` };
}
