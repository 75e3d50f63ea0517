// The same problem written in another basis: mathematically identical bounds, numerically different arithmetic.
import { adjoint, conjugate, multiply, type ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import type { Problem } from '../../src/problem/model.js';

/** The problem in the basis U (Kraus K·U†, constraints UΓU†); a state ρ' becomes Uρ'U†. */
export function rotated(problem: Problem, u: ComplexMatrix): Problem {
  return {
    ...problem,
    constraints: problem.constraints.map((c) => ({ ...c, operator: conjugate(u, c.operator) })),
    branches: problem.branches.map((b) => ({ ...b, krausOperators: b.krausOperators.map((k) => multiply(k, adjoint(u))) })),
  };
}
