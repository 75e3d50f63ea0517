import {
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  kron,
  multiply,
  columns,
} from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import { rangeIsometry } from '../linear-algebra/support.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { AnnouncementBranch, LinearConstraint, Problem } from './model.js';

/**
 * Eigenvalues within EDGE_CONSTANT·n·u·‖Γ‖_F of a spectral edge count as the edge when deciding that a
 * constraint pins ρ to an eigenspace (the eigensolver's backward-error scale, with a generous constant).
 */
export const EDGE_CONSTANT = BACKWARD_ERROR_CONSTANT;

/** The smallest face of the PSD cone known to hold every feasible ρ: ρ = P·ρ̃·P† with P an isometry. */
export interface FeasibleFace {
  /** d × r isometry, or null when the face is the whole space. */
  isometry: ComplexMatrix | null;
  dimension: number;
  /** Why each reduction was made, for the user and the logs. */
  reasons: string[];
}

function edgeTolerance(n: number, operator: ComplexMatrix): number {
  return EDGE_CONSTANT * n * UNIT_ROUNDOFF * Math.max(frobeniusNorm(operator), Number.MIN_VALUE);
}

/**
 * Exact facial reduction from the problem data: a rank-deficient source marginal confines ρ to
 * supp(ρ_A) ⊗ H_B; a constraint whose bound sits at an edge of its operator's spectrum (upper ≤ λ_min,
 * or lower ≥ λ_max) confines ρ to that eigenspace. Repeated until nothing changes.
 */
export function feasibleFace(problem: Problem): FeasibleFace {
  const d = problem.dimensionA * problem.dimensionB;
  const reasons: string[] = [];
  let isometry: ComplexMatrix | null = null;
  if (problem.sourceMarginal) {
    const support = rangeIsometry(problem.sourceMarginal);
    if (support.cols < problem.dimensionA) {
      isometry = kron(support, ComplexMatrix.identity(problem.dimensionB));
      reasons.push(`source marginal has rank ${support.cols} < ${problem.dimensionA}: ρ lives on supp(ρ_A) ⊗ H_B`);
    }
  }
  let changed = true;
  while (changed) {
    changed = false;
    for (const constraint of problem.constraints) {
      const operator = isometry ? conjugateAdjoint(isometry, constraint.operator) : constraint.operator;
      const n = operator.rows;
      if (n <= 1) break;
      const { values, vectors } = eigh(operator);
      // Relative to the operator as given: its restriction inherits absolute rounding errors of that size, and a
      // restriction that vanishes (a direction already excluded) must not have its noise read as a spectrum.
      const tolerance = edgeTolerance(constraint.operator.rows, constraint.operator);
      let keep: ComplexMatrix | null = null;
      if (values[n - 1] - values[0] <= tolerance) continue;
      if (Math.abs(constraint.upper - values[0]) <= tolerance) {
        let count = 0;
        while (count < n && values[count] <= values[0] + tolerance) count++;
        if (count < n) keep = columns(vectors, 0, count);
      } else if (Math.abs(constraint.lower - values[n - 1]) <= tolerance) {
        let first = n - 1;
        while (first > 0 && values[first - 1] >= values[n - 1] - tolerance) first--;
        if (first > 0) keep = columns(vectors, first, n);
      }
      if (keep) {
        isometry = isometry ? multiply(isometry, keep) : keep;
        reasons.push(`constraint "${constraint.label}" sits at an edge of its spectrum: face of dimension ${keep.cols}`);
        changed = true;
      }
    }
  }
  return { isometry, dimension: isometry ? isometry.cols : d, reasons };
}

/** The problem seen on the face: Kraus operators K·P, constraint operators P†ΓP (ρ̃ of size r × r). */
export function restrictToFace(problem: Problem, face: FeasibleFace): Problem {
  const p = face.isometry;
  if (!p) return problem;
  const constraints: LinearConstraint[] = problem.constraints.map((c) => ({
    ...c,
    operator: conjugateAdjoint(p, c.operator),
  }));
  const branches: AnnouncementBranch[] = problem.branches.map((b) => ({
    ...b,
    krausOperators: b.krausOperators.map((k) => multiply(k, p)),
  }));
  return { ...problem, sourceMarginal: undefined, constraints, branches };
}

/** ρ = P·ρ̃·P† back on H_A ⊗ H_B. */
export function liftFromFace(face: FeasibleFace, reduced: ComplexMatrix): ComplexMatrix {
  const p = face.isometry;
  if (!p) return reduced;
  return conjugate(p, reduced);
}

/** ρ̃ = P†·ρ·P. */
export function compressToFace(face: FeasibleFace, rho: ComplexMatrix): ComplexMatrix {
  return face.isometry ? conjugateAdjoint(face.isometry, rho) : rho;
}

