// Equivalent scores (docs/finite-size.md, "Starting scores"): two score vectors whose difference a satisfies
// Σ_c a_c·M_c = e·1 + (an operator fixed by the source marginal) give the same Σ_c f(c)·Pr[c] on every state the
// device model allows, so the same asymptotic rate; they differ in the variance of the score under the honest
// statistics, which the acceptance window and the Rényi order both pay for. The min-tradeoff coefficients are one
// arbitrary member of that class (the solver's dual); the least-variance member is the better start.
import { ComplexMatrix, addScaledInPlace, hermitianPart, multiplyAdjointLeft } from '../linear-algebra/complex-matrix.js';
import { EigenvalueDecomposition, Matrix, pseudoInverse } from '../linear-algebra/ml-matrix.js';
import type { Problem } from '../problem/model.js';
import { sourceMarginalConstraints } from '../problem/validate.js';

/** Eigenvalue of BᵀB, relative to the largest, below which a direction is a dependency (rounding leaves ~1e−16). */
const DEPENDENCY_TOLERANCE = 1e-12;

/** M_c = Σ_j K†K of every branch: Pr[c] = Tr(M_c ρ). */
export function branchOperators(problem: Problem): ComplexMatrix[] {
  const d = problem.dimensionA * problem.dimensionB;
  return problem.branches.map((b) => {
    const operator = new ComplexMatrix(d, d);
    for (const k of b.krausOperators) addScaledInPlace(operator, multiplyAdjointLeft(k, k), 1);
    return hermitianPart(operator);
  });
}

/**
 * A basis (columns, one entry per branch) of the score differences a that leave Σ_c a_c·Pr[c] constant on every
 * allowed state: the branch part of the null space of [M_1 … M_m | 1 | Γ_1 … Γ_K] (Γ the source-marginal
 * operators), found as the eigenvectors of BᵀB with negligible eigenvalue. Always contains the constant vector.
 */
export function equivalentScoreDirections(problem: Problem): number[][] {
  const m = problem.branches.length;
  const d = problem.dimensionA * problem.dimensionB;
  const marginal = problem.sourceMarginal ? sourceMarginalConstraints(problem.sourceMarginal, problem.dimensionB).map((c) => c.operator) : [];
  const operators = [...branchOperators(problem), ComplexMatrix.identity(d), ...marginal];
  const columns = operators.map((o) => [...o.re, ...o.im]);
  const gram = new Matrix(operators.length, operators.length);
  for (let i = 0; i < operators.length; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = 0; k < columns[i].length; k++) s += columns[i][k] * columns[j][k];
      gram.set(i, j, s);
      gram.set(j, i, s);
    }
  }
  const eig = new EigenvalueDecomposition(gram, { assumeSymmetric: true });
  const values = eig.realEigenvalues;
  const largest = Math.max(...values.map(Math.abs));
  const directions: number[][] = [];
  values.forEach((v, k) => {
    if (Math.abs(v) > DEPENDENCY_TOLERANCE * largest) return;
    const vector = eig.eigenvectorMatrix.getColumn(k).slice(0, m);
    if (Math.hypot(...vector) > 1e-8) directions.push(vector);
  });
  return directions;
}

/**
 * The member of f's equivalence class with the least variance under the honest distribution p (weighted least
 * squares over the directions), shifted back to f's honest mean: a constant shift leaves the key length unchanged.
 */
export function leastVarianceScores(problem: Problem, scores: readonly number[], honest: readonly number[]): number[] {
  const directions = equivalentScoreDirections(problem);
  if (directions.length === 0) return [...scores];
  const m = scores.length;
  const k = directions.length;
  // Normal equations (AᵀPA)t = −AᵀPf, A the m×k matrix of directions, P = diag(p).
  const normal = new Matrix(k, k);
  const right = new Matrix(k, 1);
  for (let i = 0; i < k; i++) {
    let r = 0;
    for (let c = 0; c < m; c++) r -= directions[i][c] * honest[c] * scores[c];
    right.set(i, 0, r);
    for (let j = 0; j < k; j++) {
      let s = 0;
      for (let c = 0; c < m; c++) s += directions[i][c] * honest[c] * directions[j][c];
      normal.set(i, j, s);
    }
  }
  const t = pseudoInverse(normal).mmul(right).getColumn(0);
  const moved = scores.map((f, c) => f + directions.reduce((acc, a, i) => acc + t[i] * a[c], 0));
  const mean = (g: readonly number[]) => g.reduce((acc, x, c) => acc + honest[c] * x, 0);
  const shift = mean(scores) - mean(moved);
  return moved.map((g) => g + shift);
}
