import { trace, traceProductReal, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import type { Problem } from './model.js';

/** Largest violation of Tr ρ = 1, ρ ⪰ 0 and every constraint, on the original problem. */
export function maxConstraintViolation(problem: Problem, rho: ComplexMatrix): number {
  let worst = Math.abs(trace(rho).re - 1);
  worst = Math.max(worst, -eigvalsh(rho)[0]);
  for (const c of problem.constraints) {
    const v = traceProductReal(c.operator, rho);
    worst = Math.max(worst, c.lower - v, v - c.upper);
  }
  return Math.max(worst, 0);
}
