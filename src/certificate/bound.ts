import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  directSum,
  frobeniusNorm,
  hermiticityDefect,
  traceProductReal,
} from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import type { Objective, ObjectiveEvaluation, ReferenceBlocks, BranchSupport } from '../objectives/index.js';
import type { Problem } from '../problem/model.js';
import { compressToFace, faceContinuityMargin, type FeasibleFace } from '../problem/feasible-face.js';
import { matrixFromJson } from '../problem/json.js';
import type { Certificate } from '../result/types.js';
import { pinchedBlocks } from '../objectives/spectral-blocks.js';
import { isKeyless } from '../objectives/branch-supports.js';
import { logCoefficient } from '../objectives/objective.js';

// The margin uses the eigensolver backward-error scale c·n·u·‖A‖_F (docs/math.md §5).
import { BACKWARD_ERROR_CONSTANT as MARGIN_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

/** Every term of LB = F(ρ') − ⟨∇F, ρ'⟩ + Σy⁺ℓ − Σy⁻u + λ_min(∇F − Σ yΓ) [+ τ terms] − margin. */
export interface BoundBreakdown {
  objectiveValue: number;
  /** ⟨∇F(ρ'), ρ'⟩ (sandwiched-up: jointly with ⟨∇_τF, τ'⟩), by Euler's identity for homogeneous functions. */
  gradientInnerProduct: number;
  dualConstant: number;
  smallestEigenvalue: number;
  /** Sandwiched-up: min over blocks λ_min(∇_τF); 0 otherwise. */
  referenceTerm: number;
  /** Floating-point allowance (a conservative estimate, not interval arithmetic). */
  margin: number;
  lowerBound: number;
  /** Σ (y⁺ + y⁻)·(upper − lower)/2: what the statistical tolerance intervals cost the bound. */
  statisticalSlack: number;
}

/**
 * The certified lower bound from a full-rank linearization point on the feasible face (docs/math.md §5 restated in
 * the README). Valid for any multipliers y⁺, y⁻ ≥ 0 and any full-rank ρ' by convexity and weak duality.
 */
export function linearizationBound(
  restricted: Problem,
  objective: Objective,
  rho: ComplexMatrix,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
  reference?: ReferenceBlocks,
  /** F and ∇F at ρ' when the caller already has them (not for sandwiched-up, whose bound needs ∇_τ too). */
  precomputed?: ObjectiveEvaluation,
): BoundBreakdown {
  const n = rho.rows;
  let objectiveValue: number;
  let gradient: ComplexMatrix;
  let referenceTerm = 0;
  let referenceError = 0;
  let evaluationConditioning = 1;
  if (objective.request.kind === 'sandwiched-up') {
    if (!reference) throw new Error('linearizationBound: sandwiched-up needs reference states τ');
    const joint = objective.evaluateAtReference(rho, reference);
    objectiveValue = joint.value;
    gradient = joint.gradientState;
    evaluationConditioning = joint.conditioning;
    let smallest = Infinity;
    joint.gradientReference.forEach((blocks) =>
      blocks.forEach((g) => {
        smallest = Math.min(smallest, eigvalsh(g)[0]);
        referenceError += MARGIN_CONSTANT * g.rows * UNIT_ROUNDOFF * frobeniusNorm(g);
      }),
    );
    // −⟨∇_τF, τ'⟩ is carried by the joint Euler term below.
    referenceTerm = smallest;
  } else {
    const evaluation = precomputed?.gradient ? precomputed : objective.evaluate(rho, { withGradient: true, assumeFullRank: true });
    objectiveValue = evaluation.value;
    gradient = evaluation.gradient as ComplexMatrix;
    evaluationConditioning = evaluation.conditioning ?? 1;
  }
  const shifted = gradient.clone();
  let dualConstant = 0;
  let statisticalSlack = 0;
  let multiplierWeight = 0;
  restricted.constraints.forEach((constraint, i) => {
    const yLower = multipliersLower[i];
    const yUpper = multipliersUpper[i];
    if (yLower === 0 && yUpper === 0) return;
    addScaledInPlace(shifted, constraint.operator, -(yLower - yUpper));
    // An open side (±∞) carries a zero multiplier; skipping it avoids 0·∞.
    if (yLower !== 0) dualConstant += yLower * constraint.lower;
    if (yUpper !== 0) dualConstant -= yUpper * constraint.upper;
    // A one-sided constraint has no tolerance interval to pay for, and only its finite bound enters the scale.
    const lower = Number.isFinite(constraint.lower) ? constraint.lower : 0;
    const upper = Number.isFinite(constraint.upper) ? constraint.upper : 0;
    if (Number.isFinite(constraint.lower) && Number.isFinite(constraint.upper)) {
      statisticalSlack += ((yLower + yUpper) * (constraint.upper - constraint.lower)) / 2;
    }
    multiplierWeight += (yLower + yUpper) * (frobeniusNorm(constraint.operator) + Math.abs(lower) + Math.abs(upper));
  });
  const smallestEigenvalue = eigvalsh(shifted)[0];
  const gradientInnerProduct = eulerInnerProduct(objective, objectiveValue);

  // Backward-error scale of each eigendecomposition; the gradient term grows like ‖ρ'‖/λ_min(ρ') because the
  // derivative of log or of a negative power amplifies a backward error by the inverse smallest eigenvalue. The
  // gradient enters once (through λ_min): its pairing with ρ' is the exact Euler value, and F itself only for
  // the Rényi kinds (for von Neumann F(ρ') − ⟨∇F, ρ'⟩ = 0 exactly).
  const rhoEigenvalues = eigvalsh(rho);
  // The worst of ρ' itself and every positive matrix the objective took a function of (branch outputs, pinched
  // blocks, sandwiched products): Kraus maps can make an output worse conditioned than ρ'.
  const conditioning = Math.max(frobeniusNorm(rho) / Math.max(rhoEigenvalues[0], Number.MIN_VALUE), evaluationConditioning);
  const scale = MARGIN_CONSTANT * n * UNIT_ROUNDOFF;
  const valueError = objective.request.kind === 'von-neumann' ? 0 : Math.abs(objectiveValue);
  const margin =
    scale * (valueError + frobeniusNorm(shifted) + multiplierWeight + frobeniusNorm(gradient) + conditioning / Math.LN2) +
    referenceError;
  const lowerBound =
    objectiveValue - gradientInnerProduct + dualConstant + smallestEigenvalue + referenceTerm - margin;
  return {
    objectiveValue,
    gradientInnerProduct,
    dualConstant,
    smallestEigenvalue,
    referenceTerm,
    margin,
    lowerBound,
    statisticalSlack,
  };
}

/** τ_c on H_c (block diagonal in the key map) → blocks on the branch's pinched support; a keyless branch stores its weight as a 1×1 matrix. */
export function referenceToSupport(support: BranchSupport, referenceOnOutput: ComplexMatrix): ComplexMatrix[] {
  if (isKeyless(support)) {
    if (referenceOnOutput.rows !== 1 || referenceOnOutput.cols !== 1) {
      throw new RangeError(`a branch without key stores its weight as a 1x1 reference state`);
    }
    return [referenceOnOutput];
  }
  const compressed = conjugateAdjoint(support.basis, referenceOnOutput);
  return pinchedBlocks(compressed, support.blockSizes, support.blockOffsets);
}

/** Blocks on the pinched support → τ_c on H_c (the 1×1 weight itself for a branch without key). */
export function referenceFromSupport(support: BranchSupport, blocks: ComplexMatrix[]): ComplexMatrix {
  if (isKeyless(support)) return blocks[0];
  return conjugate(support.basis, directSum(blocks));
}

/** The stored linearization point on the face and, for sandwiched-up, the stored τ on the supports. */
export interface StoredLinearization {
  state: ComplexMatrix;
  reference?: ReferenceBlocks;
}

/** Hermiticity accepted for a stored linearization point (it went through JSON with full precision). */
const STATE_HERMITICITY_TOLERANCE = 1e-12;

/** Reads a certificate's stored matrices; throws RangeError with the reason when one is malformed. */
export function readStoredLinearization(
  face: FeasibleFace,
  objective: Objective,
  certificate: Pick<Certificate, 'linearizationState' | 'referenceStates'>,
): StoredLinearization {
  const stored = matrixFromJson(certificate.linearizationState, 'certificate.linearizationState');
  const d = face.isometry ? face.isometry.rows : face.dimension;
  if (stored.rows !== d || stored.cols !== d) throw new RangeError(`linearization state must be ${d}x${d}`);
  if (hermiticityDefect(stored) > STATE_HERMITICITY_TOLERANCE) throw new RangeError('linearization state is not Hermitian');
  const state = compressToFace(face, stored);
  const references = certificate.referenceStates;
  const reference =
    objective.request.kind === 'sandwiched-up' && references
      ? objective.supports.map((support, c) =>
          referenceToSupport(support, matrixFromJson(references[c], `certificate.referenceStates[${c}]`)),
        )
      : undefined;
  return { state, reference };
}

/**
 * The bound exactly as a verifier recomputes it from a certificate's stored numbers (compressing the stored state
 * onto the face, converting stored τ to the supports); the solver claims this very number, so a re-check on the
 * same platform reproduces it bit for bit.
 */
export function certificateBreakdown(
  face: FeasibleFace,
  restricted: Problem,
  objective: Objective,
  certificate: Pick<Certificate, 'linearizationState' | 'referenceStates' | 'multipliersLower' | 'multipliersUpper'>,
  read: StoredLinearization = readStoredLinearization(face, objective, certificate),
): BoundBreakdown {
  const breakdown = linearizationBound(
    restricted,
    objective,
    read.state,
    certificate.multipliersLower,
    certificate.multipliersUpper,
    read.reference,
  );
  // On an exposed face: the continuity margin for feasible states off the face (docs/faces.md).
  const faceMargin = faceContinuityMargin(face, restricted, objective.request.kind, certificate.multipliersLower, certificate.multipliersUpper);
  if (faceMargin === 0) return breakdown;
  return { ...breakdown, margin: breakdown.margin + faceMargin, lowerBound: breakdown.lowerBound - faceMargin };
}

/**
 * ⟨∇F(ρ), ρ⟩ in closed form (docs/convergence.md). Every kind is built from functions of the branch outputs that
 * are positively homogeneous — D(X‖Z(X)) and the scores of degree 1 in ρ; Q̃, Q̄ of degree 1 in ρ, and
 * Q̃_β(X‖τ) of degree 1 jointly in (ρ, τ) — so Euler's identity gives ⟨∇F, ρ⟩ = F for von Neumann and
 * c/ln 2 for F = c·log₂ Q (sandwiched-up: the joint pairing ⟨∇_ρF, ρ⟩ + ⟨∇_τF, τ⟩). Using the exact value
 * removes the rounding of that pairing, whose error the gradient's conditioning would otherwise amplify.
 */
export function eulerInnerProduct(objective: Objective, objectiveValue: number): number {
  const request = objective.request;
  return request.kind === 'von-neumann' ? objectiveValue : logCoefficient(request) / Math.LN2;
}
