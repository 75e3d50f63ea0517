// The terms every linearization bound shares, on a face or lifted off it: the dual term (docs/math.md §4, weak
// duality (★)) S = G − Σ yΓ and Σy⁺ℓ − Σy⁻u, Euler's closed form of ⟨∇F, ρ'⟩, and sandwiched-up's τ term.
import { addScaledInPlace, frobeniusNorm, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { Objective } from '../objectives/index.js';
import { logCoefficient } from '../objectives/objective.js';
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

/**
 * ⟨∇F(ρ), ρ⟩ in closed form (docs/convergence.md). Every kind is built from functions of the branch outputs that
 * are positively homogeneous — D(X‖Z(X)) and the scores of degree 1 in ρ; Q̃, Q̄ of degree 1 in ρ, and
 * Q̃_β(X‖τ) of degree 1 jointly in (ρ, τ) — so Euler's identity gives ⟨∇F, ρ⟩ = F for von Neumann and
 * c/ln 2 for F = c·log₂ Q (sandwiched-up: the joint pairing ⟨∇_ρF, ρ⟩ + ⟨∇_τF, τ⟩). Using the exact value
 * removes the rounding of that pairing, whose error the gradient's conditioning would otherwise amplify.
 */
export function eulerInnerProduct(objective: Objective, objectiveValue: number): number {
  const request = objective.request;
  return request.kind === 'von-neumann' ? objectiveValue : logCoefficient(request) / Math.LN2;
}

/** Sandwiched-up's τ term: min over branches and key blocks of λ_min(∇_τF), and the rounding scale of those eigenvalues. */
export function referenceTerm(gradientReference: readonly (readonly ComplexMatrix[])[]): { smallest: number; error: number } {
  let smallest = Infinity;
  let error = 0;
  gradientReference.forEach((blocks) =>
    blocks.forEach((g) => {
      smallest = Math.min(smallest, eigvalsh(g)[0]);
      error += BACKWARD_ERROR_CONSTANT * g.rows * UNIT_ROUNDOFF * frobeniusNorm(g);
    }),
  );
  return { smallest, error };
}
