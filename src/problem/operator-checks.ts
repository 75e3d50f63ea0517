// Defect measures used by validation: how far an operator is from being Hermitian, a projector, the identity,
// or positive semidefinite. Each returns a number that the caller compares with a named tolerance.
import { ComplexMatrix, frobeniusNorm, hermitianPart, hermiticityDefect, multiply } from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import { ValidationError } from './errors.js';
import { HERMITICITY_TOLERANCE, POSITIVITY_TOLERANCE, TRACE_TOLERANCE } from './tolerances.js';

/** Largest entry modulus of A − 1 (A square). */
export function identityDeviation(a: ComplexMatrix): number {
  const n = a.rows;
  let worst = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const k = i * n + j;
      worst = Math.max(worst, Math.hypot(a.re[k] - (i === j ? 1 : 0), a.im[k]));
    }
  }
  return worst;
}

/** Largest entry modulus of P² − P. */
export function idempotencyDefect(p: ComplexMatrix): number {
  const square = multiply(p, p);
  let worst = 0;
  for (let k = 0; k < p.re.length; k++) {
    worst = Math.max(worst, Math.hypot(square.re[k] - p.re[k], square.im[k] - p.im[k]));
  }
  return worst;
}

/** Smallest eigenvalue of the Hermitian part. */
export function smallestEigenvalue(a: ComplexMatrix): number {
  return eigh(hermitianPart(a)).values[0];
}

/** Throws unless `m` is rows×cols. */
export function requireShape(m: ComplexMatrix, rows: number, cols: number, field: string, what = ''): void {
  if (m.rows !== rows || m.cols !== cols) {
    throw new ValidationError(field, `must be ${rows}×${cols}${what}, got ${m.rows}×${m.cols}`);
  }
}

/** Throws unless `m` is Hermitian within HERMITICITY_TOLERANCE; returns its exact Hermitian part. */
export function requireHermitian(m: ComplexMatrix, field: string): ComplexMatrix {
  const defect = hermiticityDefect(m);
  if (defect > HERMITICITY_TOLERANCE) {
    throw new ValidationError(
      field,
      `must be Hermitian (relative non-Hermitian part ${defect.toExponential(2)} exceeds ${HERMITICITY_TOLERANCE})`,
    );
  }
  return hermitianPart(m);
}

/** Throws unless the Hermitian `m` is positive semidefinite within POSITIVITY_TOLERANCE. */
export function requirePositiveSemidefinite(m: ComplexMatrix, field: string): void {
  const lowest = smallestEigenvalue(m);
  if (lowest < -POSITIVITY_TOLERANCE * Math.max(1, frobeniusNorm(m))) {
    throw new ValidationError(field, `must be positive semidefinite (smallest eigenvalue ${lowest.toExponential(3)})`);
  }
}

/** Throws unless `m` is a density operator on a space of the given dimension; returns its Hermitian part. */
export function requireDensityOperator(m: ComplexMatrix, dimension: number, field: string): ComplexMatrix {
  requireShape(m, dimension, dimension, field);
  const rho = requireHermitian(m, field);
  requirePositiveSemidefinite(rho, field);
  let traceValue = 0;
  for (let i = 0; i < dimension; i++) traceValue += rho.re[i * dimension + i];
  if (Math.abs(traceValue - 1) > TRACE_TOLERANCE) {
    throw new ValidationError(field, `must have trace 1 (got ${traceValue})`);
  }
  return rho;
}
