// Range and kernel of Hermitian PSD matrices with a rank decision from the eigensolver's backward error.
import { ComplexMatrix, frobeniusNormSafe } from './complex-matrix.js';
import { eigh, eigvalsh, type HermitianEigen } from './eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from './rounding.js';

/**
 * The threshold c·n·u·‖A‖_F below which an eigenvalue of the Hermitian n×n matrix A is zero.
 * A backward-stable eigensolver returns the exact eigenvalues of A + E with ‖E‖_F ≲ n·u·‖A‖_F, so an
 * eigenvalue of that size cannot be told apart from zero; c = BACKWARD_ERROR_CONSTANT (64) adds room
 * for rounding in forming A itself (sums of Kraus conjugations, Kronecker products).
 */
export function zeroEigenvalueTolerance(a: ComplexMatrix): number {
  return BACKWARD_ERROR_CONSTANT * Math.max(a.rows, 1) * UNIT_ROUNDOFF * frobeniusNormSafe(a);
}

/** Eigendecomposition split into range (λ > tolerance) and kernel (|λ| ≤ tolerance) parts. */
export interface SupportDecomposition {
  eigen: HermitianEigen;
  tolerance: number;
  rank: number;
  /** Orthonormal basis of the range, n×rank (columns ordered by ascending eigenvalue). */
  range: ComplexMatrix;
  /** Orthonormal basis of the kernel, n×(n − rank). */
  kernel: ComplexMatrix;
}

/** Columns of `vectors` whose indices are listed, as a new matrix. */
function selectColumns(vectors: ComplexMatrix, indices: number[]): ComplexMatrix {
  const n = vectors.rows;
  const w = indices.length;
  const out = new ComplexMatrix(n, w);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < w; c++) {
      out.re[i * w + c] = vectors.re[i * vectors.cols + indices[c]];
      out.im[i * w + c] = vectors.im[i * vectors.cols + indices[c]];
    }
  }
  return out;
}

/**
 * Range/kernel of a Hermitian PSD matrix. Throws if an eigenvalue is below −tolerance (not PSD).
 * `caller` names the function in error messages.
 */
export function supportDecomposition(a: ComplexMatrix, caller = 'supportDecomposition'): SupportDecomposition {
  const eigen = eigh(a);
  const tolerance = zeroEigenvalueTolerance(a);
  const rangeIdx: number[] = [];
  const kernelIdx: number[] = [];
  for (let k = 0; k < eigen.values.length; k++) {
    const lambda = eigen.values[k];
    if (lambda < -tolerance) {
      throw new RangeError(`${caller}: matrix is not positive semidefinite (eigenvalue ${lambda} < −${tolerance})`);
    }
    if (lambda > tolerance) rangeIdx.push(k);
    else kernelIdx.push(k);
  }
  return {
    eigen,
    tolerance,
    rank: rangeIdx.length,
    range: selectColumns(eigen.vectors, rangeIdx),
    kernel: selectColumns(eigen.vectors, kernelIdx),
  };
}

/** Orthonormal basis (columns, n×rank) of the range of a Hermitian PSD matrix. */
export function rangeIsometry(a: ComplexMatrix): ComplexMatrix {
  return supportDecomposition(a, 'rangeIsometry').range;
}

/** Orthonormal basis (columns, n×(n − rank)) of the kernel of a Hermitian PSD matrix. */
export function kernelIsometry(a: ComplexMatrix): ComplexMatrix {
  return supportDecomposition(a, 'kernelIsometry').kernel;
}

/**
 * Number of eigenvalues of the Hermitian part of A with |λ| > c·n·u·‖A‖_F (see zeroEigenvalueTolerance).
 * Works for indefinite Hermitian matrices too.
 */
export function numericalRank(a: ComplexMatrix): number {
  const values = eigvalsh(a);
  const tolerance = zeroEigenvalueTolerance(a);
  let rank = 0;
  for (let k = 0; k < values.length; k++) if (Math.abs(values[k]) > tolerance) rank++;
  return rank;
}
