// Matrix functions the tests use as references and as inputs to the library's divided differences; the service
// itself evaluates its logarithms and powers on supports (src/objectives/), so these are not part of src/.
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { eigh, type HermitianEigen } from '../../src/linear-algebra/eigen.js';
import { closePositive, positiveSemidefiniteEigen, spectralFunction, type ScalarFunction } from '../../src/linear-algebra/matrix-functions.js';
export { matrixPower } from '../../src/linear-algebra/matrix-functions.js';
import { zeroEigenvalueTolerance } from '../../src/linear-algebra/support.js';

/** Natural logarithm with f' = 1/x and a cancellation-free ln x − ln y = log1p((x−y)/y). */
export const naturalLogFunction: ScalarFunction = {
  value: (x) => Math.log(x),
  derivative: (x) => 1 / x,
  difference: (x, y) => (closePositive(x, y) ? Math.log1p((x - y) / y) : Math.log(x) - Math.log(y)),
};

/**
 * x·ln x (0 at x = 0) with f' = ln x + 1 and a cancellation-free
 * x ln x − y ln y = x·log1p((x−y)/y) + (x−y)·ln y.
 */
export const entropyDensityFunction: ScalarFunction = {
  value: (x) => (x > 0 ? x * Math.log(x) : 0),
  derivative: (x) => Math.log(x) + 1,
  difference: (x, y) =>
    closePositive(x, y) ? x * Math.log1p((x - y) / y) + (x - y) * Math.log(y) : entropyDensityFunction.value(x) - entropyDensityFunction.value(y),
};

/** √A of a Hermitian PSD matrix (the PSD square root). */
export function matrixSqrt(a: ComplexMatrix): ComplexMatrix {
  const { eig } = positiveSemidefiniteEigen(a, 'matrixSqrt');
  return spectralFunction(eig, Math.sqrt);
}

/** Natural logarithm of a Hermitian positive-definite matrix; throws if it is not full rank. */
export function matrixLog(a: ComplexMatrix): ComplexMatrix {
  const { eig, rank } = positiveSemidefiniteEigen(a, 'matrixLog');
  if (rank < a.rows) {
    throw new RangeError(`matrixLog: matrix is not positive definite (numerical rank ${rank} of ${a.rows})`);
  }
  return spectralFunction(eig, Math.log);
}
