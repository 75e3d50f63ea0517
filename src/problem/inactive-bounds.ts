// Exact pre-processing of the constraints before any optimisation: a bound beyond its operator's spectrum never
// binds and is dropped (it would otherwise set the oracle's scale and tolerances), a bound on the far side of the
// spectrum is infeasible on its own, and a zero operator is decided outright.
import { frobeniusNorm } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { EDGE_CONSTANT, feasibleFace, restrictToFace, type FeasibleFace } from './feasible-face.js';
import { farkasTest } from './farkas.js';
import type { LinearConstraint, Problem } from './model.js';


/** A constraint that no density operator can meet, with the single-constraint Farkas multipliers proving it. */
export interface ConstraintInfeasibility {
  multipliersLower: Float64Array;
  multipliersUpper: Float64Array;
  violation: number;
  dominantConstraints: string[];
}

export interface ActiveBounds {
  /** The problem with every inactive bound replaced by ∓Infinity (same constraints, same order). */
  problem: Problem;
  /** Set when one constraint alone is infeasible (a zero operator with 0 outside [ℓ, u], or ℓ > λ_max, or u < λ_min). */
  infeasibility: ConstraintInfeasibility | null;
  /** One line per dropped bound, for the result's notes. */
  dropped: string[];
}

/**
 * Drops bounds beyond the spectrum: ℓ ≤ λ_min(Γ) − δ never binds since Tr(Γρ) ≥ λ_min for every density operator
 * (likewise u ≥ λ_max + δ), δ = c·n·u·‖Γ‖_F the eigensolver's backward-error scale, so the decision is exact.
 * `checkpoint` is called before each eigenvalue computation (it throws to abort).
 */
export function dropInactiveBounds(problem: Problem, checkpoint?: () => void): ActiveBounds {
  const n = problem.dimensionA * problem.dimensionB;
  const dropped: string[] = [];
  let infeasibility: ConstraintInfeasibility | null = null;
  const constraints = problem.constraints.map((c, i): LinearConstraint => {
    if (infeasibility) return c;
    const isZero = c.operator.re.every((x) => x === 0) && c.operator.im.every((x) => x === 0);
    let min: number;
    let max: number;
    let slack: number;
    if (isZero) {
      [min, max, slack] = [0, 0, 0];
    } else if (c.spectrum) {
      ({ min, max } = c.spectrum);
      slack = EDGE_CONSTANT * n * UNIT_ROUNDOFF * frobeniusNorm(c.operator);
    } else {
      if (!Number.isFinite(c.lower) && !Number.isFinite(c.upper)) return c;
      checkpoint?.();
      const values = eigvalsh(c.operator);
      [min, max] = [values[0], values[n - 1]];
      slack = EDGE_CONSTANT * n * UNIT_ROUNDOFF * frobeniusNorm(c.operator);
    }
    // A bound on the far side of the spectrum: the constraint alone has no solution.
    if (c.upper < min - slack || c.lower > max + slack) {
      const single = singleConstraintCertificate(problem, i, c.lower > max + slack ? 'lower' : 'upper', n);
      if (single) {
        infeasibility = single;
        return c;
      }
    }
    const lower = c.lower !== c.upper && c.lower <= min - slack ? -Infinity : c.lower;
    const upper = c.lower !== c.upper && c.upper >= max + slack ? Infinity : c.upper;
    if (isZero && c.lower === c.upper && c.lower === 0) return { ...c, lower: -Infinity, upper: Infinity };
    if (lower === c.lower && upper === c.upper) return c;
    if (lower !== c.lower && Number.isFinite(c.lower)) dropped.push(`constraint "${c.label}": lower bound ${c.lower} ≤ λ_min = ${min} never binds; dropped`);
    if (upper !== c.upper && Number.isFinite(c.upper)) dropped.push(`constraint "${c.label}": upper bound ${c.upper} ≥ λ_max = ${max} never binds; dropped`);
    return { ...c, lower, upper };
  });
  return { problem: { ...problem, constraints }, infeasibility, dropped };
}

/** y = e_i on the violated side, kept only when the Farkas test confirms it above rounding. */
function singleConstraintCertificate(
  problem: Problem,
  index: number,
  side: 'lower' | 'upper',
  n: number,
): ConstraintInfeasibility | null {
  const m = problem.constraints.length;
  const multipliersLower = new Float64Array(m);
  const multipliersUpper = new Float64Array(m);
  (side === 'lower' ? multipliersLower : multipliersUpper)[index] = 1;
  const test = farkasTest(problem.constraints, n, multipliersLower, multipliersUpper);
  if (!(test.violation > test.rounding)) return null;
  return { multipliersLower, multipliersUpper, violation: test.violation, dominantConstraints: [problem.constraints[index].label] };
}

/** The problem as the solver and the verifier both see it: inactive bounds dropped, then restricted to its face. */
export interface ReducedProblem {
  active: ActiveBounds;
  face: FeasibleFace;
  /** The active problem on the face (ρ̃ of size face.dimension). */
  restricted: Problem;
}

export function reduceProblem(problem: Problem, checkpoint?: () => void): ReducedProblem {
  const active = dropInactiveBounds(problem, checkpoint);
  const face = feasibleFace(active.problem, { checkpoint });
  return { active, face, restricted: restrictToFace(active.problem, face) };
}
