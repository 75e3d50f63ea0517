// Shared checks for eigendecompositions: residual ‖AV − VΛ‖_F/‖A‖_F and orthonormality ‖V†V − 1‖_F.
import {
  adjoint,
  ComplexMatrix,
  frobeniusNorm,
  frobeniusNormSafe,
  multiply,
  multiplyAdjointLeft,
  subtract,
} from '../../src/linear-algebra/complex-matrix.js';
import type { HermitianEigen } from '../../src/linear-algebra/eigen.js';

/** ‖A·V − V·Λ‖_F / ‖A‖_F (0 for the zero matrix when the residual is 0). */
export function relativeResidual(a: ComplexMatrix, eig: HermitianEigen): number {
  const av = multiply(a, eig.vectors);
  const vl = multiply(eig.vectors, ComplexMatrix.diagonal(eig.values));
  // Safe norms: entries up to 1e300 would overflow a plain sum of squares.
  const r = frobeniusNormSafe(subtract(av, vl));
  const norm = frobeniusNormSafe(a);
  return norm === 0 ? r : r / norm;
}

/** ‖V†V − 1‖_F. */
export function orthonormalityDefect(v: ComplexMatrix): number {
  return frobeniusNorm(subtract(multiplyAdjointLeft(v, v), ComplexMatrix.identity(v.cols)));
}

/** V·diag(d)·V†. */
export function fromSpectrum(v: ComplexMatrix, d: ArrayLike<number>): ComplexMatrix {
  return multiply(multiply(v, ComplexMatrix.diagonal(d)), adjoint(v));
}

export function isAscending(values: Float64Array): boolean {
  for (let i = 1; i < values.length; i++) if (values[i] < values[i - 1]) return false;
  return true;
}
