// The Farkas test of infeasibility, shared by the pre-processing, the solver and the verifier: y⁺, y⁻ ≥ 0 with
// Σ y⁺ℓ − Σ y⁻u − λ_max(Σ (y⁺ − y⁻)Γ) > 0 proves that no density operator meets the constraints, because
// Tr(Γ_i ρ) ≥ ℓ_i and ≤ u_i would give Σ y⁺ℓ − Σ y⁻u ≤ Tr((Σ yΓ)ρ) ≤ λ_max(Σ yΓ).
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { addScaledInPlace, ComplexMatrix, frobeniusNorm, traceProductReal } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import type { LinearConstraint } from './model.js';

/** Generous constant c of the rounding level c·n·u·scale below which a violation is not trusted as positive. */
export const FARKAS_ROUNDING_FACTOR = 64;
const UNIT_ROUNDOFF = 2 ** -53;

export interface FarkasTest {
  /** Σ y⁺ℓ − Σ y⁻u − λ_max(Σ yΓ): positive proves infeasibility; −∞ when a multiplier sits on an absent bound. */
  violation: number;
  /** The rounding level of that number: c·n·u·Σ(y⁺ + y⁻)(‖Γ‖_F + |ℓ| + |u|) over the finite bounds. */
  rounding: number;
}

/** Evaluates the Farkas test for multipliers on the constraints of an n-dimensional problem (or face). */
export function farkasTest(
  constraints: readonly LinearConstraint[],
  dimension: number,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
): FarkasTest {
  const combination = ComplexMatrix.zeros(dimension);
  let bound = 0;
  let scale = 0;
  constraints.forEach((c, i) => {
    const yLower = multipliersLower[i];
    const yUpper = multipliersUpper[i];
    if (yLower === 0 && yUpper === 0) return;
    addScaledInPlace(combination, c.operator, yLower - yUpper);
    if (yLower !== 0) bound += yLower * c.lower;
    if (yUpper !== 0) bound -= yUpper * c.upper;
    const finiteBounds = (Number.isFinite(c.lower) ? Math.abs(c.lower) : 0) + (Number.isFinite(c.upper) ? Math.abs(c.upper) : 0);
    scale += (yLower + yUpper) * (frobeniusNorm(c.operator) + finiteBounds);
  });
  const largest = eigvalsh(combination)[dimension - 1];
  const violation = Number.isNaN(bound) ? -Infinity : bound - largest;
  return { violation, rounding: FARKAS_ROUNDING_FACTOR * dimension * UNIT_ROUNDOFF * scale };
}

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
