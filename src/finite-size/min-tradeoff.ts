// Min-tradeoff export: a von Neumann certificate's bound is affine in the constraint values (the λ_min term does
// not depend on them), so g(s) = constant + Σ_i y_i·s_i lower-bounds H(S|CE) at every state on the certificate's
// feasible face, whatever its statistics s_i = Tr(Γ_i σ) (docs/finite-size.md, "Min-tradeoff export").
import { certificateBreakdown } from '../certificate/bound.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { SolveResult } from '../result/types.js';
import { frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { createObjective } from '../objectives/index.js';
import { feasibleFace, restrictToFace } from '../problem/feasible-face.js';
import type { Problem } from '../problem/model.js';

export interface MinTradeoffFunction {
  /** g(s) = constant + Σ coefficient_i·s_i, in bits per round. */
  constant: number;
  coefficients: { label: string; coefficient: number }[];
  /** g at the statistics the certificate was computed for (equals its certified bound up to the allowance below). */
  valueAtSolvedStatistics: number;
  /** Where g is a valid lower bound. */
  validity: string;
}

/**
 * The affine function of a von Neumann result's certificate. Pure: recomputes the certificate's breakdown from
 * the problem (as the verifier does) and moves the statistics out of the dual constant Σy⁺ℓ − Σy⁻u. The
 * floating-point allowance of Σ y_i s_i is re-taken for any |s_i| ≤ ‖Γ_i‖ (the margin's multiplier term).
 */
export function minTradeoffFunction(problem: Problem, result: SolveResult): MinTradeoffFunction {
  const certificate = result.certificate;
  if (!certificate || result.entropy !== 'von-neumann') {
    throw new RangeError('a min-tradeoff function needs a von Neumann result with a certificate');
  }
  const face = feasibleFace(problem);
  const restricted = restrictToFace(problem, face);
  const objective = createObjective(restricted, { kind: 'von-neumann' });
  const breakdown = certificateBreakdown(face, restricted, objective, certificate);
  const scale = BACKWARD_ERROR_CONSTANT * face.dimension * UNIT_ROUNDOFF;
  let allowance = 0;
  const coefficients = problem.constraints.map((constraint, i) => {
    const yLower = certificate.multipliersLower[i];
    const yUpper = certificate.multipliersUpper[i];
    allowance += scale * (yLower + yUpper) * 2 * Math.max(1, frobeniusNorm(constraint.operator));
    return { label: constraint.label, coefficient: yLower - yUpper };
  });
  const constant = breakdown.lowerBound - breakdown.dualConstant - allowance;
  const solvedValue = problem.constraints.reduce(
    (acc, c, i) => acc + coefficients[i].coefficient * (c.lower === c.upper ? c.lower : (c.lower + c.upper) / 2),
    constant,
  );
  const faceNote = face.reasons.length === 0 ? 'the whole state space' : `the feasible face (${face.reasons.join('; ')})`;
  return {
    constant,
    coefficients,
    valueAtSolvedStatistics: solvedValue,
    validity:
      `H(S|CE) ≥ constant + Σ coefficient_i·Tr(Γ_i σ) for every density operator σ on ${faceNote}, ` +
      'whatever its statistics; scores are 0 and the value is the von Neumann entropy of one round',
  };
}
