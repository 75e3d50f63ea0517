import { frobeniusNorm, trace, traceProductReal, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import type { Problem } from './model.js';

/**
 * A state meets the constraints when every violation is at most this, measured relative to the constraint's
 * operator (Tr(Γρ) − u ≤ this·‖Γ‖_F) and absolutely for Tr ρ = 1 and ρ ⪰ 0. Scaled by the operator, never by the
 * size of the bound, so a huge bound cannot widen it. The oracle's own feasibility tolerance is 1e-10.
 */
export const FEASIBILITY_TOLERANCE = 1e-9;

/** Violations of Tr ρ = 1, ρ ⪰ 0 and every constraint: the largest absolute one, and the largest with each
 * constraint's divided by ‖Γ_i‖_F (compare that one with FEASIBILITY_TOLERANCE). One eigenvalue solve for both. */
export function constraintViolations(problem: Problem, rho: ComplexMatrix): { absolute: number; relative: number } {
  const cone = Math.max(Math.abs(trace(rho).re - 1), -eigvalsh(rho)[0], 0);
  let absolute = cone;
  let relative = cone;
  for (const c of problem.constraints) {
    const v = traceProductReal(c.operator, rho);
    const violation = Math.max(c.lower - v, v - c.upper, 0);
    if (violation === 0) continue;
    absolute = Math.max(absolute, violation);
    const norm = frobeniusNorm(c.operator);
    relative = Math.max(relative, norm > 0 ? violation / norm : Infinity);
  }
  return { absolute, relative };
}

/** Largest absolute violation of Tr ρ = 1, ρ ⪰ 0 and every constraint, on the original problem. */
export function maxConstraintViolation(problem: Problem, rho: ComplexMatrix): number {
  return constraintViolations(problem, rho).absolute;
}

/** Largest violation with each constraint's relative to ‖Γ_i‖_F (trace and positivity absolute). */
export function relativeConstraintViolation(problem: Problem, rho: ComplexMatrix): number {
  return constraintViolations(problem, rho).relative;
}
