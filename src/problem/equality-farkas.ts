// Farkas certificates from the equalities alone (kept apart from the test itself, which the verifier loads: this
// part needs a real eigensolver from ml-matrix and only the solver's set-up calls it).
import { EigenvalueDecomposition, Matrix } from '../linear-algebra/ml-matrix.js';
import { ComplexMatrix, traceProductReal } from '../linear-algebra/complex-matrix.js';
import { farkasTest } from './farkas.js';
import type { LinearConstraint } from './model.js';

/**
 * A Farkas certificate from the equalities alone, for data whose equalities contradict each other (statistics
 * inconsistent with the source marginal, say): w with Σ w_i Γ_i + w_0·1 ≈ 0 but Σ w_i b_i + w_0 ≠ 0, found as
 * the projection of (b, 1) onto the numerical null space of the Gram matrix of (Γ_i, 1). Null when no candidate
 * passes the Farkas test above its rounding level.
 */
export function equalityFarkas(
  constraints: readonly LinearConstraint[],
  dimension: number,
): { multipliersLower: Float64Array; multipliersUpper: Float64Array; violation: number } | null {
  const equalities = constraints.map((c, i) => i).filter((i) => constraints[i].lower === constraints[i].upper);
  if (equalities.length === 0) return null;
  const operators = [...equalities.map((i) => constraints[i].operator), ComplexMatrix.identity(dimension)];
  const values = [...equalities.map((i) => constraints[i].lower), 1];
  const k = operators.length;
  const gram = new Matrix(k, k);
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const g = traceProductReal(operators[a], operators[b]);
      gram.set(a, b, g);
      gram.set(b, a, g);
    }
  }
  const { realEigenvalues, eigenvectorMatrix } = new EigenvalueDecomposition(gram, { assumeSymmetric: true });
  const largest = Math.max(...realEigenvalues.map(Math.abs));
  for (const share of [1e-14, 1e-12, 1e-10, 1e-8]) {
    const w = new Float64Array(k);
    realEigenvalues.forEach((lambda, j) => {
      if (Math.abs(lambda) > share * largest) return;
      let along = 0;
      for (let a = 0; a < k; a++) along += eigenvectorMatrix.get(a, j) * values[a];
      for (let a = 0; a < k; a++) w[a] += along * eigenvectorMatrix.get(a, j);
    });
    const multipliersLower = new Float64Array(constraints.length);
    const multipliersUpper = new Float64Array(constraints.length);
    equalities.forEach((i, a) => {
      if (w[a] > 0) multipliersLower[i] = w[a];
      else if (w[a] < 0) multipliersUpper[i] = -w[a];
    });
    const test = farkasTest(constraints, dimension, multipliersLower, multipliersUpper);
    if (test.violation > test.rounding) return { multipliersLower, multipliersUpper, violation: test.violation };
  }
  return null;
}
