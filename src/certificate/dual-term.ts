// The dual term of every linearization bound (docs/math.md §4, weak duality (★)): S = G − Σ yΓ and Σy⁺ℓ − Σy⁻u.
import { addScaledInPlace, frobeniusNorm, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { Problem } from '../problem/model.js';

/** S = G − Σ yΓ, the dual constant Σy⁺ℓ − Σy⁻u, the statistical slack and the multipliers' rounding scale. */
export function dualPart(
  problem: Problem,
  gradient: ComplexMatrix,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
): { shifted: ComplexMatrix; dualConstant: number; statisticalSlack: number; multiplierWeight: number } {
  const shifted = gradient.clone();
  let dualConstant = 0;
  let statisticalSlack = 0;
  let multiplierWeight = 0;
  problem.constraints.forEach((constraint, i) => {
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
  return { shifted, dualConstant, statisticalSlack, multiplierWeight };
}
