// The Farkas test of infeasibility, shared by the pre-processing, the solver and the verifier: y⁺, y⁻ ≥ 0 with
// Σ y⁺ℓ − Σ y⁻u − λ_max(Σ (y⁺ − y⁻)Γ) > 0 proves that no density operator meets the constraints, because
// Tr(Γ_i ρ) ≥ ℓ_i and ≤ u_i would give Σ y⁺ℓ − Σ y⁻u ≤ Tr((Σ yΓ)ρ) ≤ λ_max(Σ yΓ).
import { addScaledInPlace, ComplexMatrix, frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { LinearConstraint } from './model.js';

/** Generous constant c of the rounding level c·n·u·scale below which a violation is not trusted as positive. */
export const FARKAS_ROUNDING_FACTOR = BACKWARD_ERROR_CONSTANT;

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
