import { frobeniusNorm, trace, traceProductReal, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import type { Problem } from './model.js';

/**
 * A state meets the constraints when every violation is at most this, measured relative to the constraint's
 * operator (Tr(Γρ) − u ≤ this·‖Γ‖_F) and absolutely for Tr ρ = 1 and ρ ⪰ 0. Scaled by the operator, never by the
 * size of the bound, so a huge bound cannot widen it. The oracle's own feasibility tolerance is 1e-10.
 */
export const FEASIBILITY_TOLERANCE = 1e-9;

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

/** As maxConstraintViolation, with each constraint's violation divided by ‖Γ_i‖_F (compare with FEASIBILITY_TOLERANCE). */
export function relativeConstraintViolation(problem: Problem, rho: ComplexMatrix): number {
  let worst = Math.abs(trace(rho).re - 1);
  worst = Math.max(worst, -eigvalsh(rho)[0]);
  for (const c of problem.constraints) {
    const v = traceProductReal(c.operator, rho);
    const violation = Math.max(c.lower - v, v - c.upper, 0);
    if (violation === 0) continue;
    const norm = frobeniusNorm(c.operator);
    worst = Math.max(worst, norm > 0 ? violation / norm : Infinity);
  }
  return Math.max(worst, 0);
}
