// How far a step may go: the eigenvalue floor of the cone, the room left in interval constraints, and sliding
// along the intervals a step pushes against.
import { Matrix, solve as solveLinear } from '../linear-algebra/ml-matrix.js';
import {
  addScaledInPlace,
  largestEntry,
  multiply,
  multiplyAdjointLeft,
  traceProductReal,
  type ComplexMatrix,
} from '../linear-algebra/complex-matrix.js';
import { eigvalsh, type HermitianEigen } from '../linear-algebra/eigen.js';
import type { LinearConstraint, Problem } from '../problem/model.js';

/** Halvings of the estimated step before it is given up (2^-60 is below every step the line search can resolve). */
const STEP_CHECK_HALVINGS = 60;

/**
 * The largest t ≤ longest with λ_min(x + t·d) ≥ floor (as far as a direct check resolves it). Iterates kept this
 * far inside the cone have gradients that rounding cannot corrupt (an eigenvalue near u·‖x‖ has no correct digits,
 * and neither would log of it). 0 for a non-finite direction: the caller then refuses the step.
 */
export function stepToEigenvalueFloor(
  x: ComplexMatrix,
  iterate: HermitianEigen,
  direction: ComplexMatrix,
  floor: number,
  longest = Infinity,
): number {
  const { values } = iterate;
  if (!(values[0] > 0)) return 0;
  // An iterate already below the floor (a warm start, a face point) may not sink any further.
  floor = Math.min(floor, values[0]);
  const size = largestEntry(direction);
  if (!Number.isFinite(size)) return 0;
  if (size === 0) return longest;
  let step = Math.min(longest, scaledFloorStep(iterate, direction, floor, size));
  if (step === Infinity) return step;
  // The scaled eigenproblem has eigenvalues of very different sizes and a dense solver resolves them only to
  // u·‖M‖ absolutely: its step is checked on x + t·d itself, allowing half the floor for the rounding of that check.
  for (let halving = 0; halving < STEP_CHECK_HALVINGS; halving++, step /= 2) {
    const end = x.clone();
    addScaledInPlace(end, direction, step);
    if (eigvalsh(end)[0] >= floor / 2) return step;
  }
  return 0;
}

/**
 * 1/λ_max(M) with M = (Λ−floor)^{-1/2} V†(−d)V (Λ−floor)^{-1/2}, the direction divided by its largest entry and
 * Λ−floor kept above the eigenvalue resolution u·λ_max(x), so that no entry of M overflows.
 */
function scaledFloorStep(iterate: HermitianEigen, direction: ComplexMatrix, floor: number, size: number): number {
  const { values, vectors } = iterate;
  const n = values.length;
  const resolution = Number.EPSILON * values[n - 1];
  const inverseRoot = new Float64Array(n);
  const scaled = multiplyAdjointLeft(vectors, multiply(direction, vectors));
  // At the floor itself only directions that do not lower λ_min are allowed (the scaled matrix is then ill-posed).
  for (let i = 0; i < n; i++) inverseRoot[i] = 1 / Math.sqrt(Math.max(values[i] - floor, resolution));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      scaled.re[i * n + j] *= -inverseRoot[i] * inverseRoot[j] / size;
      scaled.im[i * n + j] *= -inverseRoot[i] * inverseRoot[j] / size;
    }
  }
  // x − floor + t·d ⪰ 0 ⟺ 1 − t·M ⪰ 0.
  const largest = eigvalsh(scaled)[n - 1];
  return largest > 0 ? 1 / (largest * size) : Infinity;
}

/** The largest t keeping every interval constraint lower ≤ Tr(Γ(x + t·d)) ≤ upper (equalities are kept by d). */
export function stepToIntervalBounds(problem: Problem, x: ComplexMatrix, direction: ComplexMatrix): number {
  return problem.constraints.reduce((step, c) => Math.min(step, intervalRoom(c, x, direction)), Infinity);
}

/** The largest t with lower ≤ Tr(Γ(x + t·d)) ≤ upper for one interval constraint (Infinity for an equality). */
export function intervalRoom(c: LinearConstraint, x: ComplexMatrix, direction: ComplexMatrix): number {
  if (c.lower === c.upper) return Infinity;
  const rate = traceProductReal(c.operator, direction);
  if (rate > 0 && Number.isFinite(c.upper)) return Math.max(0, (c.upper - traceProductReal(c.operator, x)) / rate);
  if (rate < 0 && Number.isFinite(c.lower)) return Math.max(0, (c.lower - traceProductReal(c.operator, x)) / rate);
  return Infinity;
}

/** Rounds of adding newly blocking intervals before the projected direction is accepted. */
const ACTIVE_SET_ROUNDS = 4;

/**
 * Removes from a tangent direction its components along the interval constraints that would stop it almost at
 * once (active bounds it pushes against), so quasi-Newton steps slide along those faces instead of stalling.
 */
export function alongActiveIntervals(
  problem: Problem,
  x: ComplexMatrix,
  direction: ComplexMatrix,
  tangents: readonly (ComplexMatrix | null)[],
  shortestStep: number,
): ComplexMatrix {
  const active: ComplexMatrix[] = [];
  // Gram entries and right-hand sides grow with the active set: each round adds only the new tangents' products.
  const products: number[][] = [];
  const rhs: number[] = [];
  let d = direction;
  for (let round = 0; round < ACTIVE_SET_ROUNDS; round++) {
    let added = false;
    problem.constraints.forEach((c, i) => {
      const tangent = tangents[i];
      if (tangent === null || active.includes(tangent)) return;
      if (intervalRoom(c, x, d) < shortestStep) {
        products.push([...active.map((a) => traceProductReal(a, tangent)), traceProductReal(tangent, tangent)]);
        rhs.push(traceProductReal(tangent, direction));
        active.push(tangent);
        added = true;
      }
    });
    if (!added) break;
    const m = active.length;
    const gram = new Matrix(m, m);
    for (let i = 0; i < m; i++) {
      for (let j = 0; j <= i; j++) {
        gram.set(i, j, products[i][j]);
        gram.set(j, i, products[i][j]);
      }
    }
    // The SVD's minimum-norm solution: G is singular when blocking tangents are dependent (docs/convergence.md, "Sliding").
    const coefficients = solveLinear(gram, Matrix.columnVector(rhs), true).getColumn(0);
    d = direction.clone();
    active.forEach((a, i) => addScaledInPlace(d, a, -coefficients[i]));
  }
  return d;
}
