// F and ∇F's blocks at a point lifted off an exposed face, in double-double (docs/faces.md, "Petz lifts in
// double-double"): the branch outputs there have eigenvalues far below a double eigensolver's absolute accuracy.
// This module forms the outputs, sums the branches, pulls the gradient back and cuts its blocks; each kind supplies
// its branch term (petz-down-lifted.ts; petz-up-lifted.ts for Petz-up and sandwiched-up; von-neumann-lifted.ts).
// Shared by the solver and the verifier.
import { ComplexMatrix, frobeniusNorm, multiply } from '../linear-algebra/complex-matrix.js';
import {
  DD_UNIT_ROUNDOFF,
  ddAddScaled,
  ddBlock,
  ddHermitianEigen,
  DdMatrix,
  ddMultiply,
  ddScalarIdentity,
  ddTrace,
  type DdEigen,
} from '../linear-algebra/double-double-matrix.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { branchWeight, largestDimension, logCoefficient, type Objective } from '../objectives/index.js';

/**
 * Relative error of a power λ^p or a divided difference of t^p formed in double from a double-double eigenvalue
 * rounded to double (u/2), by Math.pow or the expm1/log1p quotient (a few ulps; from memory), with room.
 */
export const ETA = 16 * UNIT_ROUNDOFF;
/** Relative error of one double-double product or sum of the package (Joldes, Muller & Popescu 2017), with room. */
export const DD_STEP = 8 * DD_UNIT_ROUNDOFF;

/** ∇F over [P̂ | Q̂] and F at the point, with bounds on their errors. */
export interface DoubleDoubleLiftTerms {
  value: number;
  /** F − c/ln 2, the linearization's constant (Euler: ⟨∇F, ρ'⟩ = c/ln 2); 0 for von Neumann (degree 1). */
  constant: number;
  /** ∇F rounded to double: for the solver's multipliers only. */
  gradient: ComplexMatrix;
  face: ComplexMatrix;
  cross: ComplexMatrix;
  complement: ComplexMatrix;
  /** Sandwiched-up: the smallest eigenvalue over τ's key blocks of ∇_τF and a bound on its error (0 for the Petz kinds). */
  referenceTerm: { smallest: number; error: number };
  /** Sandwiched-up: ∇_τF per branch and key block, rounded to double (empty for the Petz kinds). */
  referenceGradient: ComplexMatrix[][];
  /** Bounds on the operator-norm error of each block, and on the constant's error. */
  errors: { face: number; cross: number; complement: number; constant: number };
}

/** What a branch contributes, for the weighted output X' = w·X_c. */
export interface BranchLift {
  /** Q_c(X') for the Rényi kinds; for von Neumann the branch's term of F itself. */
  term: number;
  termError: number;
  /** ∇_{X'}Q (von Neumann: ∇_{X'}F) on the branch's output, in double-double. */
  gradient: DdMatrix;
  /** Bound on ‖δ∇_{X'}Q‖_F. */
  gradientError: number;
  /** Bound on the error of Σ_j N_j†·∇_{X'}Q·N_j, N_j = K_jP̂ (the face block, graded by the kind). */
  faceError: number;
  /** Sandwiched-up: ∇_τQ on each of the branch's key blocks, with a bound on its error (Frobenius, all blocks). */
  reference?: { blocks: DdMatrix[]; error: number };
}

/**
 * A kind's branch term: X' (weighted output, double-double), its forming error, the face maps K_jP̂ and, for
 * sandwiched-up, the branch's blocks of τ'.
 */
export type BranchLifter = (
  support: BranchSupport,
  x: DdMatrix,
  formingError: number,
  faceMaps: ComplexMatrix[],
  alpha: number,
  reference?: ComplexMatrix[],
) => BranchLift;

/** A branch without key for the Petz kinds: Q̄(X‖X) = Tr X exactly, gradient 1. */
export function traceBranch(x: DdMatrix, formingError: number): BranchLift {
  return { term: ddTrace(x), termError: formingError * Math.sqrt(x.rows), gradient: ddScalarIdentity(x.rows, 1), gradientError: 0, faceError: 0 };
}

/**
 * Largest ρ or branch output lifted in double-double: the preconditioned Jacobi eigendecompositions took 0.07 s at 16,
 * 0.23 s at 32 and 1.5 s at 64 (idle; about n³), several per lift weight, inside result assembly, which cannot be
 * interrupted (d64#3 Petz-up: about 4 s for five weights). 72 admits the d = 64 models' outputs of dimension 65.
 */
export const DOUBLE_DOUBLE_LIFT_MAX_DIMENSION = 72;

/**
 * Largest ρ or branch output a cancelled run still lifts in double-double, at one weight (decompositions of about
 * 0.25 s at 32): above it the lift would hold the thread for seconds after the caller gave up.
 */
export const DOUBLE_DOUBLE_LIFT_CANCELLED_DIMENSION = 40;

/** Whether the problem is small enough for a double-double lift (by default the solver's and verifier's limit). */
export function fitsDoubleDoubleLift(objective: Objective, limit = DOUBLE_DOUBLE_LIFT_MAX_DIMENSION): boolean {
  return largestDimension(objective) <= limit;
}

/** Σ_j K_j·A·K_j† with doubles K_j, in double-double. */
function branchOutput(kraus: readonly ComplexMatrix[], rho: DdMatrix): DdMatrix {
  let out = new DdMatrix(kraus[0].rows, kraus[0].rows);
  for (const k of kraus) {
    const kd = DdMatrix.from(k);
    out = ddAddScaled(out, ddMultiply(ddMultiply(kd, rho), kd, false, true), [0, 1]);
  }
  return out;
}

/** Places square blocks along the diagonal. */
export function blockDiagonal(blocks: readonly DdMatrix[], size: number): DdMatrix {
  const out = new DdMatrix(size, size);
  let offset = 0;
  for (const b of blocks) {
    for (let i = 0; i < b.rows; i++) for (let j = 0; j < b.cols; j++) out.set(offset + i, offset + j, b.re(i, j), b.im(i, j));
    offset += b.rows;
  }
  return out;
}

/** The eigenvalues rounded to double. */
export function rounded(e: DdEigen): Float64Array {
  return Float64Array.from(e.values, (v) => v[1] + v[0]);
}

/** The eigendecomposition rounded to double (for the charges' cluster weights, which carry a rounding slack). */
export function roundedEigen(e: DdEigen): { values: Float64Array; vectors: ComplexMatrix } {
  return { values: rounded(e), vectors: e.vectors.toDouble() };
}

/** A key-block-diagonal matrix (Z(X), or τ') block by block, decomposed, with the bounds the lifts take from it. */
export interface BlockSpectrum {
  /** Key block b of a matrix on the branch's output. */
  blockOf: (a: DdMatrix, b: number) => DdMatrix;
  blocks: DdMatrix[];
  eigen: DdEigen[];
  values: Float64Array[];
  /** ‖E_Y‖_F for Y = ⊕ Y_b: the sum of the blocks' residuals and the entries' own error. */
  error: number;
  /** A lower bound on Y's smallest eigenvalue: each block moves by its own residual. */
  lowest: number;
  /** max_b ‖V_b†V_b − 1‖ (from the residuals, against each block's own norm). */
  defect: number;
}

/** The pinched output Y = Z(X). */
export function pinchedSpectrum(support: BranchSupport, x: DdMatrix, formingError: number): BlockSpectrum {
  const blockOf = keyBlock(support);
  return blockSpectrum(blockOf, support.blockSizes.map((_, b) => blockOf(x, b)), formingError);
}

/** Key block b of a matrix on the branch's output. */
export function keyBlock(support: BranchSupport): (a: DdMatrix, b: number) => DdMatrix {
  return (a, b) => {
    const o = support.blockOffsets[b];
    return ddBlock(a, o, o + support.blockSizes[b], o, o + support.blockSizes[b]);
  };
}

/** The spectrum of a block-diagonal matrix given by its blocks, whose entries err by at most `formingError`. */
export function blockSpectrum(blockOf: (a: DdMatrix, b: number) => DdMatrix, blocks: DdMatrix[], formingError: number): BlockSpectrum {
  const eigen = blocks.map((y) => ddHermitianEigen(y));
  const values = eigen.map(rounded);
  return {
    blockOf,
    blocks,
    eigen,
    values,
    error: eigen.reduce((sum, e) => sum + e.residual, 0) + formingError,
    lowest: Math.min(...values.map((v, b) => v[0] - eigen[b].residual)) - formingError,
    defect: Math.max(...eigen.map((e, b) => e.residual / Math.max(blocks[b].frobeniusNorm(), Number.MIN_VALUE))),
  };
}

/** A double-double matrix times a double. */
export function scaleDd(a: DdMatrix, s: number): DdMatrix {
  return ddAddScaled(new DdMatrix(a.rows, a.cols), a, [0, s]);
}

/**
 * F = c·log₂ Q with Q = Σ_c Q_c(X'_c), and ∇F = c/(Q ln 2)·Σ_c w_c·Σ_j K_j†·∇_{X'}Q_c·K_j, the branch terms from
 * `lifter`; a branch without key has Q_c = Tr X'_c and gradient 1. von Neumann sums the branches' terms of F itself
 * (F = Σ_c F_c, factor 1, constant 0 by Euler's identity). The pull-back Σ_j K_j†(·)K_j has norm ≤ 1
 * (completeness), so a branch's gradient error reaches every block at most unchanged; the face block takes the
 * kind's graded bound instead. Q's relative error scales every block and moves the constant by |c|·δQ/(Q ln 2).
 */
export function liftInDoubleDouble(
  objective: Objective,
  rho: ComplexMatrix,
  face: ComplexMatrix,
  complement: ComplexMatrix,
  lifter: BranchLifter,
  /** Sandwiched-up: τ' per branch, blocks on the support. */
  references?: readonly ComplexMatrix[][],
): DoubleDoubleLiftTerms {
  const n = rho.rows;
  const vonNeumann = objective.request.kind === 'von-neumann';
  const rhoDd = DdMatrix.from(rho);
  let gradientQ = new DdMatrix(n, n);
  // Q = Σ_c Q_c (von Neumann: F = Σ_c F_c) and its error.
  let sum = 0;
  let sumError = 0;
  let gradientError = 0;
  let faceError = 0;
  const referenceGradients: NonNullable<BranchLift['reference']>[] = [];
  objective.supports.forEach((support, c) => {
    const weight = branchWeight(objective.request, support.score);
    const m = support.dimension;
    const output = branchOutput(support.krausOperators, rhoDd);
    const krausWeight = support.krausOperators.reduce((s, k) => s + frobeniusNorm(k) ** 2, 0);
    // Forming X in double-double: each entry a sum over the Kraus operators' products.
    const formingError = weight * DD_STEP * 4 * (n + m) * krausWeight * frobeniusNorm(rho);
    // Petz-down pairs X^β with Z(X)^{1−β} and has no term for an output rank deficient on its support.
    if (objective.request.kind === 'petz-down' && !isKeyless(support) && support.outputRange) {
      throw new RangeError('lift in double-double: a branch output rank deficient on its support');
    }
    const maps = support.krausOperators.map((k) => multiply(k, face));
    const branch = lifter(support, scaleDd(output, weight), formingError, maps, objective.request.alpha, references?.[c]);
    sum += branch.term;
    sumError += branch.termError;
    gradientError += weight * branch.gradientError;
    faceError += weight * branch.faceError;
    if (branch.reference) referenceGradients.push(branch.reference);
    const g = scaleDd(branch.gradient, weight);
    for (const k of support.krausOperators) {
      const kd = DdMatrix.from(k);
      gradientQ = ddAddScaled(gradientQ, ddMultiply(ddMultiply(kd, g, true), kd), [0, 1]);
    }
    const pullBackError = DD_STEP * 8 * (n + m) * g.frobeniusNorm() * krausWeight;
    gradientError += pullBackError;
    faceError += pullBackError;
  });
  // von Neumann: the branches' terms are F's own, so F is their sum and the factor 1.
  const coefficient = vonNeumann ? 0 : logCoefficient(objective.request);
  const factor = vonNeumann ? 1 : coefficient / (sum * Math.LN2);
  const relativeQ = vonNeumann ? 0 : sumError / sum;
  const gradientF = scaleDd(gradientQ, factor);
  const faceDd = DdMatrix.from(face);
  const complementDd = DdMatrix.from(complement);
  const onFace = ddMultiply(ddMultiply(faceDd, gradientF, true), faceDd).toDouble();
  const cross = ddMultiply(ddMultiply(faceDd, gradientF, true), complementDd).toDouble();
  const offFace = ddMultiply(ddMultiply(complementDd, gradientF, true), complementDd).toDouble();
  // Each block: the pulled-back error, the factor's relative error on the block itself, and the rounding to double.
  const scaled = (block: ComplexMatrix) => (relativeQ + 2 * UNIT_ROUNDOFF) * frobeniusNorm(block);
  const value = vonNeumann ? sum : coefficient * Math.log2(sum);
  // Sandwiched-up: min over τ of ⟨∇_τF, τ⟩ ≥ the smallest eigenvalue over all key blocks of ∇_τF (Tr τ = 1).
  let referenceSmallest = 0;
  let referenceError = 0;
  const referenceGradient = referenceGradients.map(({ blocks }) => blocks.map((block) => scaleDd(block, factor).toDouble()));
  if (referenceGradients.length > 0) {
    referenceSmallest = Infinity;
    // Each block's λ_min moves by at most its error: the branch's (all its blocks together), Q's relative error on the
    // block, the rounding to double and the eigenvalue's backward error; the minimum by at most the largest of these.
    for (const [c, { error }] of referenceGradients.entries()) {
      for (const rounded of referenceGradient[c]) {
        referenceSmallest = Math.min(referenceSmallest, eigvalsh(rounded)[0]);
        const blockError = Math.abs(factor) * error + scaled(rounded) + BACKWARD_ERROR_CONSTANT * rounded.rows * UNIT_ROUNDOFF * frobeniusNorm(rounded);
        referenceError = Math.max(referenceError, blockError);
      }
    }
  }
  return {
    value,
    constant: vonNeumann ? 0 : value - coefficient / Math.LN2,
    gradient: gradientF.toDouble(),
    face: onFace,
    cross,
    complement: offFace,
    referenceTerm: { smallest: referenceSmallest, error: referenceError },
    referenceGradient,
    errors: {
      face: Math.abs(factor) * faceError + scaled(onFace),
      cross: Math.abs(factor) * gradientError + scaled(cross),
      complement: Math.abs(factor) * gradientError + scaled(offFace),
      // |δF| ≤ |c|·|δQ|/(Q ln 2) (log₂ Q moves by at most that for |δQ| ≤ Q/2), plus the logarithm's rounding.
      // von Neumann's constant is exactly 0 (Euler); F itself is only reported.
      constant: vonNeumann
        ? 0
        : (Math.abs(coefficient) * relativeQ) / Math.LN2 / (1 - Math.min(relativeQ, 0.5)) + 4 * UNIT_ROUNDOFF * (Math.abs(value) + Math.abs(coefficient)),
    },
  };
}
