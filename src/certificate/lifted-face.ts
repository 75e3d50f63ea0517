// The lifted linearization bound on an exposed face (docs/faces.md, "The lifted linearization bound"): F is
// linearized on the whole space at a full-rank point lifted off the face, and ⟨S, σ⟩ is bounded by blocks over the
// face and its complement for every state with weight at most ε off the face. No Fannes-type continuity step, so
// the bound is not floored by h(√ε). Shared by the solver's result assembly and the verifier; no optimiser code.
import {
  addScaledInPlace,
  ComplexMatrix,
  columns,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  hermitianPart,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  scale,
  trace,
} from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { isKeyless } from '../objectives/branch-supports.js';
import { createObjective, type IdentitySplit, type Objective, type ReferenceBlocks } from '../objectives/index.js';
import { logCoefficient } from '../objectives/objective.js';
import type { FeasibleFace } from '../problem/feasible-face.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { BoundBreakdown } from './breakdown.js';
import { dualPart, eulerInnerProduct, referenceTerm } from './dual-term.js';
import { quasiEntropyFaceCharges, vonNeumannFaceCharge } from './face-block-charge.js';
import { fitsDoubleDoubleLift, liftInDoubleDouble, type DoubleDoubleLiftTerms } from './double-double-lift.js';
import { petzDownBranch } from './petz-down-lifted.js';
import { petzUpBranch, rankProvedByShapes, sandwichedBranch } from './petz-up-lifted.js';
import { vonNeumannBranch } from './von-neumann-lifted.js';

/**
 * Weights μ of the complement in the lifted points the solver tries (the verifier takes whatever point is stored).
 * Half-decades: the linearization loss grows with μ and the face charge like 1/λ_0 ∝ 1/μ; they cross steeply.
 */
export const LIFT_WEIGHTS: readonly number[] = [1e-6, 1e-7, 1e-8, 1e-9, 1e-10].flatMap((w) => [w, w / Math.sqrt(10)]);

/**
 * Petz-down's loss falls like μ^{2−α} (√μ at α = 1.5), so its points sit near 1e-14, evaluated in double-double; below
 * about 1e-15 the stored point's complement (μ/(n − k) per direction) would drown in the rounding of its face part.
 */
const PETZ_DOWN_LIFT_WEIGHTS: readonly number[] = [1e-12, 1e-13, 3e-14, 1e-14];

/**
 * Petz-up and sandwiched-up in double-double: M = Y^s·X·Y^s (Y = Z(X) or τ') has its smallest eigenvalue near
 * μ·λ_min(Y)^{2s}, which keeps first order down to about 1e-12.
 */
const PRODUCT_LIFT_WEIGHTS: readonly number[] = [1e-8, 1e-9, 1e-10, 1e-11, 1e-12];

/**
 * von Neumann in double-double: its loss falls like μ·ln(1/μ) and no first-order condition limits μ there, so three
 * points suffice (each costs a few eigendecompositions in double-double: about 1.5 s apiece at d = 64).
 */
const VON_NEUMANN_LIFT_WEIGHTS: readonly number[] = [1e-9, 1e-10, 1e-11];

/**
 * Whether the lifted point is evaluated in double-double: Petz-down always; von Neumann, Petz-up and sandwiched-up (at
 * its fixed τ') where the problem is small enough.
 */
export function liftsInDoubleDouble(objective: Objective): boolean {
  const { kind } = objective.request;
  return kind === 'petz-down' || fitsDoubleDoubleLift(objective);
}

/** The weights the solver tries. */
export function liftWeights(objective: Objective): readonly number[] {
  if (!liftsInDoubleDouble(objective)) return LIFT_WEIGHTS;
  const { kind } = objective.request;
  return kind === 'petz-down' ? PETZ_DOWN_LIFT_WEIGHTS : kind === 'von-neumann' ? VON_NEUMANN_LIFT_WEIGHTS : PRODUCT_LIFT_WEIGHTS;
}

/** The kinds whose gradient error on the face block is bounded (docs/faces.md): all four, Petz-down in double-double. */
export function hasLiftedFaceBound(kind: string): boolean {
  return kind === 'von-neumann' || kind === 'sandwiched-up' || kind === 'petz-up' || kind === 'petz-down';
}

/**
 * Whether a bound on an exposed face can come out finite for this problem: von Neumann always (continuity margin or
 * lifted bound); the Rényi kinds with a lifted bound when every branch with key has full-rank outputs on its support
 * (face-block-charge.ts), or, for Petz-up and sandwiched-up in double-double, outputs whose rank the Kraus operators'
 * shapes prove; otherwise the face would only take time from the whole space.
 */
export function faceBoundApplies(problem: Problem, request: Required<EntropyRequest>): boolean {
  if (request.kind === 'von-neumann') return true;
  if (!hasLiftedFaceBound(request.kind)) return false;
  const objective = createObjective(problem, request);
  const { supports } = objective;
  if (request.kind === 'petz-down' && !fitsDoubleDoubleLift(objective)) return false;
  // Petz-up and sandwiched-up in double-double also take an output rank deficient on its support, where its rank is
  // proved by the Kraus operators' shapes (`rankProvedByShapes`).
  const kernelLift = request.kind !== 'petz-down' && fitsDoubleDoubleLift(objective);
  return supports.every((support) => isKeyless(support) || support.outputRange === null || (kernelLift && rankProvedByShapes(support)));
}

/** Orthonormal bases of the face and of its complement from one eigendecomposition of P·P†. */
export interface FaceBlocks {
  face: ComplexMatrix;
  complement: ComplexMatrix;
  /** δ ≥ ‖V†V − 1‖ for V = [face | complement]: the bases are unitary only to rounding. */
  defect: number;
  /** θ ≥ the angle between range(face) and range(P): the eigenvectors' backward error over the spectral gap. */
  angle: number;
}

export function faceBlocks(face: FeasibleFace): FaceBlocks {
  const p = face.isometry;
  if (!p) throw new RangeError('faceBlocks: the face is the whole space');
  const n = p.rows;
  const k = p.cols;
  const projector = hermitianPart(multiplyAdjointRight(p, p));
  const { values, vectors } = eigh(projector);
  const scaleN = BACKWARD_ERROR_CONSTANT * n * UNIT_ROUNDOFF;
  const gram = multiplyAdjointLeft(vectors, vectors);
  for (let i = 0; i < n; i++) gram.re[i * n + i] -= 1;
  // The eigenvalues of P·P† are 1 ± g on the face and 0 off it: the gap is at least 1/2 while g < 1/4.
  const gap = values[n - k] - values[n - k - 1];
  return {
    face: columns(vectors, n - k, n),
    complement: columns(vectors, 0, n - k),
    defect: frobeniusNorm(gram) + scaleN * n,
    angle: gap > 0.5 ? (scaleN * frobeniusNorm(projector)) / (gap - scaleN * frobeniusNorm(projector)) : Infinity,
  };
}

/** x_μ = (1 − μ)·P·X·P†/Tr(P·X·P†) + μ·(1 − Π)/(n − k): full rank, with weight μ off the face. */
export function liftedPoint(face: FeasibleFace, blocks: FaceBlocks, faceState: ComplexMatrix, weight: number): ComplexMatrix {
  const p = face.isometry as ComplexMatrix;
  const onFace = conjugate(p, faceState);
  const x = scale(onFace, (1 - weight) / trace(onFace).re);
  const m = blocks.complement.cols;
  addScaledInPlace(x, multiplyAdjointRight(blocks.complement, blocks.complement), weight / m);
  return hermitianPart(x);
}

/**
 * The bound at a full-rank point ρ' of the whole space: for every state σ with Tr((1 − Π)σ) ≤ ε',
 *   ⟨S, σ⟩ ≥ s_P − ε'·max(0, s_P − s_Q) − 2c·√ε',   S = ∇F(ρ') − Σ yΓ,
 * with s_P, s_Q the smallest eigenvalues of S on the face and on its complement and c the norm of the block between
 * them; by convexity and Euler's identity F(σ) ≥ [F(ρ') − ⟨∇F(ρ'), ρ'⟩] + Σy⁺ℓ − Σy⁻u + that for every feasible σ
 * (sandwiched-up: jointly with τ', as in docs/math.md §5, with ∇_ρF split as a·1 + G). The margin grades the
 * gradient's error by blocks: the face block pays the branch outputs' error through the divided differences over
 * the clusters of large and small eigenvalues (face-block-charge.ts), the other blocks the full charge times √ε'
 * or ε'.
 */
export function liftedFaceBound(
  face: FeasibleFace,
  active: Problem,
  objective: Objective,
  rho: ComplexMatrix,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
  reference?: ReferenceBlocks,
  /** F, the paired matrix and the constant at ρ' when the caller already formed them (`liftedPointTerms`). */
  terms?: LiftedPointTerms,
): BoundBreakdown {
  const { kind } = objective.request;
  if (!hasLiftedFaceBound(kind)) throw new RangeError(`a lifted face bound is not derived for ${kind}`);
  const n = rho.rows;
  const scaleN = BACKWARD_ERROR_CONSTANT * n * UNIT_ROUNDOFF;
  const blocks = faceBlocks(face);
  const leak = face.leak ?? 0;
  const offFace = (Math.sqrt(leak) + blocks.angle) ** 2;
  const root = Math.sqrt(offFace);
  const point = terms ?? liftedPointTerms(objective, rho, reference, blocks);
  if (point.doubleDouble) return doubleDoubleLiftedBound(active, objective, point.doubleDouble, blocks, offFace, multipliersLower, multipliersUpper);
  const { shifted, dualConstant, statisticalSlack, multiplierWeight } = dualPart(active, point.gradient, multipliersLower, multipliersUpper);
  const { faceSmallest, complementSmallest, crossNorm, bound: blockBound, norms: blockNorms } = faceBlockBound(shifted, blocks, offFace);
  const rhoSmallest = eigvalsh(rho)[0];
  const weyl = (scaleN * Math.max(frobeniusNorm(rho) / Math.max(rhoSmallest, Number.MIN_VALUE), point.conditioning)) / Math.LN2;
  const derived = (scaleN * point.derivedConditioning) / Math.LN2;
  let faceCharge: number;
  let otherCharge = 0;
  if (kind === 'von-neumann') {
    faceCharge = derived + vonNeumannFaceCharge(objective, rho, blocks.face, scaleN);
  } else {
    const coefficient = logCoefficient(objective.request);
    const quasiEntropy = 2 ** (point.value / coefficient);
    const gradientFactor = coefficient / (quasiEntropy * Math.LN2);
    const charges = quasiEntropyFaceCharges(
      objective,
      rho,
      blocks.face,
      scaleN,
      quasiEntropy,
      gradientFactor,
      point.split ? { references: reference as ReferenceBlocks, identityCoefficient: point.split.identityCoefficient } : undefined,
    );
    // A relative error of Q scales the paired matrix (∝ 1/Q) and moves the constant: F − c/ln 2 by |c|/ln 2 per unit,
    // sandwiched-up's split constant by its constantSensitivity.
    const relative = charges.relativeQuasiEntropy;
    const sensitivity = point.split ? point.split.constantSensitivity : Math.abs(coefficient) / Math.LN2;
    faceCharge = derived + charges.face + relative * (Math.abs(faceSmallest) + 2 * crossNorm * root + offFace * Math.abs(complementSmallest));
    otherCharge = charges.reference + relative * sensitivity;
  }
  // Eigenvalues of the three blocks, the multipliers' sum and the gradient's assembly (not graded), the bases.
  const rounding =
    scaleN * (blockNorms.face + multiplierWeight + frobeniusNorm(point.gradient) + point.constantScale) +
    point.referenceError +
    // c = √λ_max(C·C†): an error e of λ_max moves c by at most √e.
    2 * root * Math.sqrt(scaleN) * blockNorms.cross +
    offFace * scaleN * blockNorms.complement +
    blocks.defect * (Math.abs(faceSmallest) + Math.abs(complementSmallest) + 2 * crossNorm + 3 * frobeniusNorm(shifted));
  const conditioningCharge = faceCharge + otherCharge + (2 * root + offFace) * weyl;
  const margin = rounding + conditioningCharge;
  return {
    objectiveValue: point.value,
    gradientInnerProduct: eulerInnerProduct(objective, point.value),
    dualConstant,
    smallestEigenvalue: blockBound + (point.split ? point.split.identityCoefficient : 0),
    referenceTerm: point.referenceTerm,
    margin,
    conditioningCharge,
    lowerBound: Number.isFinite(margin) ? point.constant + dualConstant + blockBound + point.referenceTerm - margin : -Infinity,
    statisticalSlack,
  };
}

/** F at ρ', the matrix paired with σ (∇F, or sandwiched-up's G = ∇_ρF − a·1), the linearization's constant and the τ terms. */
export interface LiftedPointTerms {
  value: number;
  gradient: ComplexMatrix;
  /** F(ρ') − ⟨∇F(ρ'), ρ'⟩ [− ⟨∇_τF, τ'⟩ + a] by Euler's identity. */
  constant: number;
  /** The constant's rounding scale (its size plus what Q's relative error does to it). */
  constantScale: number;
  referenceTerm: number;
  referenceError: number;
  conditioning: number;
  derivedConditioning: number;
  split?: IdentitySplit;
  /** A lift in double-double (`liftsInDoubleDouble`): ∇F's blocks over the face and its complement, with their error bounds. */
  doubleDouble?: DoubleDoubleLiftTerms;
}

/** One evaluation at ρ' serves the solver's multipliers and the bound (the verifier forms it from the stored point). */
export function liftedPointTerms(
  objective: Objective,
  rho: ComplexMatrix,
  reference: ReferenceBlocks | undefined,
  blocks: FaceBlocks,
): LiftedPointTerms {
  if (liftsInDoubleDouble(objective)) {
    const { kind } = objective.request;
    if (kind === 'sandwiched-up' && !reference) throw new Error('liftedFaceBound: sandwiched-up needs reference states τ');
    const branch =
      kind === 'von-neumann' ? vonNeumannBranch : kind === 'petz-down' ? petzDownBranch : kind === 'petz-up' ? petzUpBranch : sandwichedBranch;
    const doubleDouble = liftInDoubleDouble(objective, rho, blocks.face, blocks.complement, branch, reference);
    return {
      value: doubleDouble.value,
      gradient: doubleDouble.gradient,
      constant: doubleDouble.constant,
      constantScale: 0,
      referenceTerm: 0,
      referenceError: 0,
      conditioning: 1,
      derivedConditioning: 1,
      doubleDouble,
    };
  }
  if (objective.request.kind === 'sandwiched-up') {
    if (!reference) throw new Error('liftedFaceBound: sandwiched-up needs reference states τ');
    const joint = objective.evaluateAtReference(rho, reference);
    const tau = referenceTerm(joint.gradientReference);
    const split = joint.split;
    return {
      value: joint.value,
      gradient: split.remainder,
      constant: split.constant,
      constantScale: Math.abs(split.constant) + split.constantSensitivity,
      referenceTerm: tau.smallest,
      referenceError: tau.error + split.defectError,
      conditioning: joint.conditioning,
      derivedConditioning: joint.derivedConditioning,
      split,
    };
  }
  const evaluation = objective.evaluate(rho, { withGradient: true, assumeFullRank: true });
  const vonNeumann = objective.request.kind === 'von-neumann';
  return {
    value: evaluation.value,
    gradient: evaluation.gradient as ComplexMatrix,
    // Euler: F − ⟨∇F, ρ'⟩ is exactly 0 for von Neumann.
    constant: vonNeumann ? 0 : evaluation.value - eulerInnerProduct(objective, evaluation.value),
    constantScale: vonNeumann ? 0 : Math.abs(evaluation.value),
    referenceTerm: 0,
    referenceError: 0,
    conditioning: evaluation.conditioning ?? 1,
    derivedConditioning: evaluation.derivedConditioning ?? evaluation.conditioning ?? 1,
  };
}

/**
 * The lifted bound from ∇F's blocks formed in double-double (double-double-lift.ts): S's blocks are those
 * minus Σ yΓ's, and each block's error moves s_P, c and s_Q by at most that error (Weyl), weighted 1, 2√ε' and ε'.
 * ‖∇F‖ itself is never formed in double: its complement block is of order μ^{β−1}, whose rounding would swamp the face.
 */
function doubleDoubleLiftedBound(
  active: Problem,
  objective: Objective,
  terms: DoubleDoubleLiftTerms,
  blocks: FaceBlocks,
  offFace: number,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
): BoundBreakdown {
  const n = blocks.face.rows;
  const scaleN = BACKWARD_ERROR_CONSTANT * n * UNIT_ROUNDOFF;
  // The blocks are V†SV for V = [P̂ | Q̂] unitary only to δ: x = V·c with |c|² within δ/(1 − δ) of 1 and c's complement
  // part within 2δ of Q̂†x, so the off-face weight grows to (√ε' + 2δ)² and s_P·|c|² costs 2δ·|s_P| more.
  const delta = blocks.defect;
  const weightOff = (Math.sqrt(offFace) + 2 * delta) ** 2;
  const root = Math.sqrt(weightOff);
  const { shifted, dualConstant, statisticalSlack, multiplierWeight } = dualPart(active, ComplexMatrix.zeros(n), multipliersLower, multipliersUpper);
  const onFace = hermitianPart(addTo(terms.face, conjugateAdjoint(blocks.face, shifted)));
  const cross = addTo(terms.cross, multiply(multiplyAdjointLeft(blocks.face, shifted), blocks.complement));
  const complement = hermitianPart(addTo(terms.complement, conjugateAdjoint(blocks.complement, shifted)));
  const { faceSmallest, crossNorm, bound: blockBound, norms } = blockBoundOf(onFace, cross, complement, weightOff);
  const shiftedNorm = frobeniusNorm(shifted);
  const errors = terms.errors;
  const conditioningCharge = errors.face + 2 * root * errors.cross + weightOff * errors.complement + errors.constant + terms.referenceTerm.error;
  const rounding =
    // Σ yΓ's blocks (three products each) and the multipliers' sum; the blocks' eigenvalues; |c|² ≠ 1.
    scaleN * (3 * shiftedNorm + multiplierWeight + norms.face) +
    2 * root * Math.sqrt(scaleN) * norms.cross +
    weightOff * scaleN * norms.complement +
    ((2 * delta) / (1 - delta)) * (Math.abs(faceSmallest) + 2 * crossNorm * root);
  const margin = rounding + conditioningCharge;
  return {
    objectiveValue: terms.value,
    gradientInnerProduct: eulerInnerProduct(objective, terms.value),
    dualConstant,
    smallestEigenvalue: blockBound,
    referenceTerm: terms.referenceTerm.smallest,
    margin,
    conditioningCharge,
    lowerBound: Number.isFinite(margin) ? terms.constant + dualConstant + blockBound + terms.referenceTerm.smallest - margin : -Infinity,
    statisticalSlack,
  };
}

function addTo(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  const out = a.clone();
  addScaledInPlace(out, b, 1);
  return out;
}

/**
 * For unit x = a + b (a on the face, b off it), x†Sx ≥ s_P|a|² − 2c|a||b| + s_Q|b|²; summed over a state with weight
 * w ≤ ε' off the face (Σ p|a||b| ≤ √w by Cauchy–Schwarz) this is at least s_P − ε'·max(0, s_P − s_Q) − 2c√ε'.
 */
export function faceBlockBound(
  shifted: ComplexMatrix,
  blocks: FaceBlocks,
  offFace: number,
): {
  faceSmallest: number;
  complementSmallest: number;
  crossNorm: number;
  bound: number;
  /** Frobenius norms of the three blocks (their eigenvalues' rounding scale). */
  norms: { face: number; cross: number; complement: number };
} {
  const onFace = conjugateAdjoint(blocks.face, shifted);
  const offFaceBlock = conjugateAdjoint(blocks.complement, shifted);
  const cross = multiply(multiplyAdjointLeft(blocks.face, shifted), blocks.complement);
  return blockBoundOf(onFace, cross, offFaceBlock, offFace);
}

/** `faceBlockBound` from the three blocks themselves. */
function blockBoundOf(
  onFace: ComplexMatrix,
  cross: ComplexMatrix,
  offFaceBlock: ComplexMatrix,
  offFace: number,
): ReturnType<typeof faceBlockBound> {
  const faceSmallest = eigvalsh(onFace)[0];
  const complementSmallest = eigvalsh(offFaceBlock)[0];
  const crossNorm = Math.sqrt(Math.max(0, eigvalsh(multiplyAdjointRight(cross, cross)).at(-1) as number));
  const bound = faceSmallest - offFace * Math.max(0, faceSmallest - complementSmallest) - 2 * crossNorm * Math.sqrt(offFace);
  return {
    faceSmallest,
    complementSmallest,
    crossNorm,
    bound,
    norms: { face: frobeniusNorm(onFace), cross: frobeniusNorm(cross), complement: frobeniusNorm(offFaceBlock) },
  };
}
