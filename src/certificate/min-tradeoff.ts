// Min-tradeoff export: a von Neumann certificate's bound is affine in the constraint values (the λ_min term does
// not depend on them), so g(s) = constant + Σ_i y_i·s_i lower-bounds F at every state on the certificate's
// feasible face, whatever its statistics s_i = Tr(Γ_i σ) (docs/finite-size.md, "Min-tradeoff export"). Shared by
// the solver's result assembly and the verifier; no optimiser code.
import { frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { FeasibleFace } from '../problem/feasible-face.js';
import type { Problem } from '../problem/model.js';
import type { Certificate, MinTradeoffFunction } from '../result/types.js';
import type { BoundBreakdown } from './bound.js';

/** True when a result of this kind and problem carries a min-tradeoff function (von Neumann with constraints). */
export function hasMinTradeoff(problem: Problem, entropy: string): boolean {
  return entropy === 'von-neumann' && problem.constraints.length > 0;
}

/**
 * The affine function of a von Neumann certificate from its recomputed breakdown: the statistics move out of the
 * dual constant Σy⁺ℓ − Σy⁻u, and the floating-point allowance of Σ y_i s_i is re-taken for any |s_i| ≤ ‖Γ_i‖_F
 * (the margin's multiplier term paid it only for the solved bounds). `problem` is the problem as given (its
 * constraints in order, original bounds); `face` the certificate's feasible face.
 */
export function minTradeoffFromBreakdown(
  problem: Problem,
  face: FeasibleFace,
  certificate: Pick<Certificate, 'multipliersLower' | 'multipliersUpper'>,
  breakdown: Pick<BoundBreakdown, 'lowerBound' | 'dualConstant'>,
): MinTradeoffFunction {
  const scale = BACKWARD_ERROR_CONSTANT * face.dimension * UNIT_ROUNDOFF;
  let allowance = 0;
  const coefficients = problem.constraints.map((constraint, i) => {
    const yLower = certificate.multipliersLower[i];
    const yUpper = certificate.multipliersUpper[i];
    allowance += scale * (yLower + yUpper) * 2 * Math.max(1, frobeniusNorm(constraint.operator));
    return { label: constraint.label, coefficient: yLower - yUpper };
  });
  const constant = breakdown.lowerBound - breakdown.dualConstant - allowance;
  // min of g over the constraint intervals: g at the solved statistics when every constraint is an equality.
  const minimumOverIntervals = problem.constraints.reduce((acc, c, i) => {
    const y = coefficients[i].coefficient;
    return y === 0 ? acc : acc + Math.min(y * c.lower, y * c.upper);
  }, constant);
  const faceNote = face.reasons.length === 0 ? 'the whole state space' : `the feasible face (${face.reasons.join('; ')})`;
  const scored = problem.branches.some((b) => b.score !== 0);
  return {
    constant,
    coefficients,
    minimumOverIntervals,
    validity:
      `F(σ) ≥ constant + Σ coefficient_i·Tr(Γ_i σ) for every density operator σ on ${faceNote}, whatever its ` +
      (scored
        ? 'statistics; F is the von Neumann objective H(S|CE) − Σ_c f(c)·Pr[c] of one round with the problem\'s scores'
        : 'statistics; F = H(S|CE), the von Neumann entropy of one round'),
  };
}

/** Null when two min-tradeoff functions state the same numbers (within `tolerance` relative); otherwise why not. */
export function minTradeoffMismatch(stated: MinTradeoffFunction, recomputed: MinTradeoffFunction, tolerance: number): string | null {
  const differs = (a: number, b: number) => !(Math.abs(a - b) <= tolerance * (1 + Math.abs(b)));
  if (differs(stated.constant, recomputed.constant)) {
    return `minTradeoff.constant ${stated.constant} is not the certificate's (recomputed ${recomputed.constant})`;
  }
  if (!Array.isArray(stated.coefficients) || stated.coefficients.length !== recomputed.coefficients.length) {
    return `minTradeoff needs ${recomputed.coefficients.length} coefficients, one per constraint`;
  }
  for (let i = 0; i < recomputed.coefficients.length; i++) {
    const [s, r] = [stated.coefficients[i], recomputed.coefficients[i]];
    if (s?.label !== r.label || differs(s.coefficient, r.coefficient)) {
      return `minTradeoff.coefficients[${i}] (${s?.label}: ${s?.coefficient}) is not the certificate's (${r.label}: ${r.coefficient})`;
    }
  }
  if (differs(stated.minimumOverIntervals, recomputed.minimumOverIntervals)) {
    return `minTradeoff.minimumOverIntervals ${stated.minimumOverIntervals} is not recomputed ${recomputed.minimumOverIntervals}`;
  }
  if (stated.validity !== recomputed.validity) return `minTradeoff.validity does not state the certificate's domain: ${recomputed.validity}`;
  return null;
}
