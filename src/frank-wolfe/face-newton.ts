import { CholeskyDecomposition, Matrix, pseudoInverse } from '../linear-algebra/ml-matrix.js';
import { addScaledInPlace, ComplexMatrix, conjugate, conjugateAdjoint, traceProductReal } from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import type { LinearConstraint } from '../problem/model.js';

/**
 * A second-order phase on the optimal face (docs/convergence.md). Frank–Wolfe finds which interval bounds are
 * active and which eigen-directions of the iterate carry weight; on that face — ρ = V·K·V† + (the fixed small
 * part), Tr ρ = 1, every equality and every held interval bound met exactly — F is smooth and strictly convex,
 * so Newton steps (Hessian from central differences of the gradient) converge quadratically where Frank–Wolfe
 * and quasi-Newton steps crawl along the bounds. The step is only a proposal: the caller keeps Frank–Wolfe as
 * the globaliser and the oracle as the certifier.
 */

/** Which side of an interval constraint is held at its bound on the face (equalities are always held). */
export type HeldSide = 'lower' | 'upper' | null;

/** The value a constraint is held at: an equality's, a held side's bound, or null when it is free. */
export function heldTarget(c: LinearConstraint, side: HeldSide): number | null {
  if (c.lower === c.upper) return c.lower;
  return side === 'lower' ? c.lower : side === 'upper' ? c.upper : null;
}

export interface FaceEvaluation {
  value: number;
  gradient: ComplexMatrix;
}

export interface FaceNewtonOptions {
  /** Eigenvalues below this share of the largest are treated as off the face (kept fixed). */
  faceShare: number;
  /**
   * A spectral gap — consecutive eigenvalues at least this factor apart, the lower one below `gapShare` of the
   * largest — marks the eigenvalues under it as heading to zero: the face is the span above the gap, and the part
   * below is squeezed to `squeezeLevel` (kept full rank, so F and its gradient stay finite).
   */
  gapRatio: number;
  gapShare: number;
  squeezeLevel: number;
  /** Largest number of real tangent coordinates for which the Hessian is formed (2 evaluations each). */
  maxTangentDimension: number;
  /** Smallest eigenvalue an accepted point may have. */
  eigenvalueFloor: number;
  /** Halvings of the Newton step tried before giving up. */
  backtracks: number;
  /** Newton steps taken with one Hessian… */
  stepsInARow: number;
  /** …stopping early once the Newton decrement (twice the predicted decrease) is below this. */
  stopDecrement: number;
}

export const DEFAULT_FACE_NEWTON: Readonly<FaceNewtonOptions> = Object.freeze({
  faceShare: 1e-6,
  gapRatio: 10,
  gapShare: 1e-3,
  squeezeLevel: 1e-10,
  maxTangentDimension: 144,
  eigenvalueFloor: 1e-9,
  backtracks: 30,
  stepsInARow: 8,
  stopDecrement: 1e-9,
});

export interface FaceNewtonStep<E extends FaceEvaluation> {
  point: ComplexMatrix;
  evaluation: E;
  /** Newton decrement² g·H⁻¹·g on the face: F's predicted decrease ×2 (small near the face optimum). */
  decrement: number;
}

/**
 * One damped Newton step of F restricted to the face of `x` given by its large eigenvectors, the equalities and
 * the held interval sides; returns null when the face has no room, the Hessian cannot be formed, or no step
 * lowers F while keeping every constraint and the eigenvalue floor.
 */
export function faceNewtonStep<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  constraints: readonly LinearConstraint[],
  held: readonly HeldSide[],
  evaluate: (state: ComplexMatrix) => E | null,
  options: FaceNewtonOptions = DEFAULT_FACE_NEWTON,
): FaceNewtonStep<E> | null {
  const { values, vectors } = eigh(x);
  const n = values.length;
  const largest = values[n - 1];
  let first = 0;
  while (first < n && values[first] < options.faceShare * largest) first++;
  const gap = spectralGap(values, options);
  // Below a spectral gap: try the face above it with the part below squeezed, then the face as it is.
  if (gap > first) {
    const squeezed = faceNewtonOnFace(x, current, constraints, held, evaluate, options, values, vectors, gap, true);
    if (squeezed) return squeezed;
  }
  return faceNewtonOnFace(x, current, constraints, held, evaluate, options, values, vectors, first, false);
}

/** The index of the first eigenvalue above the widest spectral gap (see FaceNewtonOptions.gapRatio), 0 if none. */
export function spectralGap(values: ArrayLike<number>, options: Pick<FaceNewtonOptions, 'gapRatio' | 'gapShare'>): number {
  const n = values.length;
  const largest = values[n - 1];
  let best = 0;
  let widest = options.gapRatio;
  for (let i = 1; i < n; i++) {
    const below = Math.max(values[i - 1], 1e-300);
    if (values[i - 1] > options.gapShare * largest) break;
    const ratio = values[i] / below;
    if (ratio >= widest) {
      widest = ratio;
      best = i;
    }
  }
  return best;
}

function faceNewtonOnFace<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  constraints: readonly LinearConstraint[],
  held: readonly HeldSide[],
  evaluate: (state: ComplexMatrix) => E | null,
  options: FaceNewtonOptions,
  values: Float64Array,
  vectors: ComplexMatrix,
  first: number,
  squeeze: boolean,
): FaceNewtonStep<E> | null {
  const n = values.length;
  const r = n - first;
  // The face has r² real coordinates less one per held row: too many for a formed Hessian, give up at once.
  const heldRows = 1 + constraints.filter((c, i) => c.lower === c.upper || held[i] !== null).length;
  if (r === 0 || r * r - heldRows > options.maxTangentDimension) return null;
  // Face coordinates: Hermitian K on the span of the large eigenvectors, as r² real numbers.
  const face = new ComplexMatrix(n, r);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < r; j++) {
      face.re[i * r + j] = vectors.re[i * n + first + j];
      face.im[i * r + j] = vectors.im[i * n + first + j];
    }
  }
  const basis = hermitianBasis(r);
  const toFace = (coefficients: ArrayLike<number>) => conjugate(face, combine(basis, coefficients));
  const coordinates = (m: ComplexMatrix) => {
    const compressed = conjugateAdjoint(face, m);
    return Float64Array.from(basis, (b) => traceProductReal(b, compressed));
  };

  // Held rows (trace, equalities, held bounds) and how far x is from meeting them.
  // The part below the gap, squeezed to a level at which it costs F almost nothing (x·log x → 0).
  const base = x.clone();
  if (squeeze) {
    for (let j = 0; j < first; j++) {
      const drop = values[j] - options.squeezeLevel;
      if (!(drop > 0)) continue;
      for (let a = 0; a < n; a++) {
        for (let b = 0; b < n; b++) {
          // −drop·v_j·v_j†
          const ar = vectors.re[a * n + j];
          const ai = vectors.im[a * n + j];
          const br = vectors.re[b * n + j];
          const bi = vectors.im[b * n + j];
          base.re[a * n + b] -= drop * (ar * br + ai * bi);
          base.im[a * n + b] -= drop * (ai * br - ar * bi);
        }
      }
    }
  }
  const rows: Float64Array[] = [];
  const residuals: number[] = [];
  const identity = ComplexMatrix.identity(n);
  rows.push(coordinates(identity));
  residuals.push(1 - traceProductReal(identity, base));
  constraints.forEach((c, i) => {
    const target = heldTarget(c, held[i]);
    if (target === null) return;
    rows.push(coordinates(c.operator));
    residuals.push(target - traceProductReal(c.operator, base));
  });
  const m = basis.length;
  const split = rowSpaceAndTangent(rows, m);
  const { tangent, correction: solveCorrection } = split;
  const k = tangent.length;
  if (k === 0 || k > options.maxTangentDimension) return null;
  const correction = toFace(solveCorrection(residuals));

  const start = base;
  addScaledInPlace(start, correction, 1);
  // A face too small for the held rows meets them only in the least-squares sense: not a face of the feasible set.
  if (!meetsHeldRows(constraints, held, start)) return null;
  const atStart = evaluate(start);
  if (!atStart) return null;
  const directions = tangent.map((t) => toFace(t));
  const gradient = Float64Array.from(directions, (d) => traceProductReal(atStart.gradient, d));

  // Central differences of the gradient along each tangent direction (unit Hilbert–Schmidt norm).
  const smallestOnFace = eigvalsh(start)[first];
  const h = Math.min(1e-5, 0.1 * smallestOnFace);
  if (!(h > 0)) return null;
  const hessian = new Matrix(k, k);
  for (let j = 0; j < k; j++) {
    const plus = start.clone();
    addScaledInPlace(plus, directions[j], h);
    const minus = start.clone();
    addScaledInPlace(minus, directions[j], -h);
    const ep = evaluate(plus);
    const em = evaluate(minus);
    if (!ep || !em) return null;
    for (let i = 0; i < k; i++) {
      hessian.set(i, j, (traceProductReal(ep.gradient, directions[i]) - traceProductReal(em.gradient, directions[i])) / (2 * h));
    }
  }
  const symmetric = new Matrix(k, k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) symmetric.set(i, j, (hessian.get(i, j) + hessian.get(j, i)) / 2);
  const newton = dampedNewton(symmetric);
  if (newton === null) return null;

  // Backtrack until F is below both the current and the corrected point, inside the cone and every interval.
  // A squeezed face starts above F(x) by the cost of the squeeze: only the end point must beat F(x).
  const floor = squeeze ? 0.5 * options.squeezeLevel : Math.min(options.eigenvalueFloor, values[0]);
  const backtrack = (from: ComplexMatrix, coefficients: Float64Array, reference: number) => {
    const direction = ComplexMatrix.zeros(n);
    directions.forEach((d, j) => addScaledInPlace(direction, d, coefficients[j]));
    for (let t = 1, tries = 0; tries <= options.backtracks; tries++, t /= 2) {
      const candidate = from.clone();
      addScaledInPlace(candidate, direction, t);
      if (!meetsIntervals(constraints, candidate) || eigvalsh(candidate)[0] < floor) continue;
      const e = evaluate(candidate);
      if (e && e.value < reference) return { point: candidate, evaluation: e };
    }
    return null;
  };
  let step = newton.solve(gradient);
  let best: FaceNewtonStep<E> | null = null;
  let at = backtrack(start, step.coefficients, squeeze ? current.value : Math.min(current.value, atStart.value));
  // Further steps with the same Hessian (the face and its tangent directions do not change along it): each costs
  // one gradient, and they converge fast near the face optimum.
  for (let taken = 1; at !== null; taken++) {
    best = { point: at.point, evaluation: at.evaluation, decrement: step.decrement };
    if (taken >= options.stepsInARow || step.decrement <= options.stopDecrement) break;
    const g = at.evaluation.gradient;
    step = newton.solve(Float64Array.from(directions, (d) => traceProductReal(g, d)));
    if (!(step.decrement > 0)) break;
    best.decrement = step.decrement;
    at = backtrack(at.point, step.coefficients, at.evaluation.value);
  }
  if (best) return best;
  if (atStart.value < current.value && meetsIntervals(constraints, start) && eigvalsh(start)[0] > 0) {
    return { point: start, evaluation: atStart, decrement: step.decrement };
  }
  return null;
}

/** An orthonormal basis of the r×r Hermitian matrices (Hilbert–Schmidt): E_ii, (E_ij + E_ji)/√2, i(E_ij − E_ji)/√2. */
export function hermitianBasis(r: number): ComplexMatrix[] {
  const basis: ComplexMatrix[] = [];
  for (let i = 0; i < r; i++) {
    const e = ComplexMatrix.zeros(r);
    e.re[i * r + i] = 1;
    basis.push(e);
    for (let j = i + 1; j < r; j++) {
      const sym = ComplexMatrix.zeros(r);
      sym.re[i * r + j] = Math.SQRT1_2;
      sym.re[j * r + i] = Math.SQRT1_2;
      basis.push(sym);
      const anti = ComplexMatrix.zeros(r);
      anti.im[i * r + j] = -Math.SQRT1_2;
      anti.im[j * r + i] = Math.SQRT1_2;
      basis.push(anti);
    }
  }
  return basis;
}

function combine(basis: readonly ComplexMatrix[], coefficients: ArrayLike<number>): ComplexMatrix {
  const out = ComplexMatrix.zeros(basis[0].rows);
  basis.forEach((b, i) => {
    if (coefficients[i] !== 0) addScaledInPlace(out, b, coefficients[i]);
  });
  return out;
}

/**
 * From the held rows C (coordinates of the held operators): an orthonormal basis of their null space (the
 * tangent directions of the face, by Gram–Schmidt against the rows) and the least-norm solution of C·s = residual
 * (the move onto the face; dependent held rows are solved in the least-squares sense by the pseudo-inverse).
 */
export function rowSpaceAndTangent(
  rows: readonly Float64Array[],
  m: number,
): { normal: Float64Array[]; tangent: Float64Array[]; correction: (residual: readonly number[]) => Float64Array } {
  const orthonormal: Float64Array[] = [];
  const absorb = (vector: Float64Array, threshold: number): boolean => {
    const v = Float64Array.from(vector);
    const norm0 = Math.hypot(...v);
    for (let pass = 0; pass < 2; pass++) {
      for (const q of orthonormal) {
        let dot = 0;
        for (let i = 0; i < m; i++) dot += q[i] * v[i];
        for (let i = 0; i < m; i++) v[i] -= dot * q[i];
      }
    }
    const norm = Math.hypot(...v);
    if (!(norm > threshold * norm0) || norm === 0) return false;
    for (let i = 0; i < m; i++) v[i] /= norm;
    orthonormal.push(v);
    return true;
  };
  for (const row of rows) absorb(row, 1e-10);
  const rank = orthonormal.length;
  for (let i = 0; i < m && orthonormal.length < m; i++) {
    const e = new Float64Array(m);
    e[i] = 1;
    absorb(e, 1e-8);
  }
  const tangent = orthonormal.slice(rank);
  const pseudo = pseudoInverse(new Matrix(rows.map((row) => Array.from(row))));
  const correction = (residual: readonly number[]) =>
    Float64Array.from(pseudo.mmul(Matrix.columnVector([...residual])).getColumn(0));
  return { normal: orthonormal.slice(0, rank), tangent, correction };
}

/** Solves H·s = −g with a Levenberg shift when H is not positive definite; null when no shift makes it so. */
export function dampedNewton(hessian: Matrix): { solve: (gradient: Float64Array) => { coefficients: Float64Array; decrement: number } } | null {
  const k = hessian.rows;
  let scale = 0;
  for (let i = 0; i < k; i++) scale = Math.max(scale, Math.abs(hessian.get(i, i)));
  for (let shift = 0, attempt = 0; attempt < 12; attempt++, shift = shift === 0 ? 1e-10 * (scale || 1) : shift * 100) {
    const shifted = hessian.clone();
    for (let i = 0; i < k; i++) shifted.set(i, i, shifted.get(i, i) + shift);
    const cholesky = new CholeskyDecomposition(shifted);
    if (!cholesky.isPositiveDefinite()) continue;
    return {
      solve: (gradient) => {
        const solution = cholesky.solve(Matrix.columnVector(Array.from(gradient)));
        const coefficients = Float64Array.from({ length: k }, (_, i) => -solution.get(i, 0));
        let decrement = 0;
        for (let i = 0; i < k; i++) decrement -= coefficients[i] * gradient[i];
        return { coefficients, decrement };
      },
    };
  }
  return null;
}

/** Trace 1 and every equality and held side met up to rounding. */
export function meetsHeldRows(constraints: readonly LinearConstraint[], held: readonly HeldSide[], state: ComplexMatrix): boolean {
  const close = (value: number, target: number, size: number) => Math.abs(value - target) <= 1e-11 * (1 + size);
  let trace = 0;
  for (let i = 0; i < state.rows; i++) trace += state.re[i * state.cols + i];
  if (!close(trace, 1, 1)) return false;
  return constraints.every((c, i) => {
    const target = heldTarget(c, held[i]);
    if (target === null) return true;
    let size = 0;
    for (let t = 0; t < c.operator.re.length; t++) size = Math.max(size, Math.abs(c.operator.re[t]), Math.abs(c.operator.im[t]));
    return close(traceProductReal(c.operator, state), target, size);
  });
}

export function meetsIntervals(constraints: readonly LinearConstraint[], state: ComplexMatrix): boolean {
  return constraints.every((c) => {
    if (c.lower === c.upper) return true;
    const v = traceProductReal(c.operator, state);
    // Held sides are met up to rounding of the move onto them; nothing beyond that.
    const slack = 1e-14 * (1 + Math.abs(v));
    return v >= c.lower - slack && v <= c.upper + slack;
  });
}

/** When the solver tries face-Newton steps. */
export const FACE_NEWTON_SCHEDULE = Object.freeze({
  /** Not before this many oracle calls: the examples certify in one to four iterations without it. */
  firstOracleCall: 6,
  /**
   * Rank-manifold steps (rank-manifold.ts) not before this many: the boundary examples certify in up to eight
   * iterations without them, and there the attempt only cost time (CHSH w = 0.80, sandwiched-up α = 1.5: 7
   * iterations either way, CPU 29 → 198 ms, from evaluations at the squeezed, nearly singular chart points).
   */
  firstManifoldOracleCall: 10,
  /** Newton steps on one face stop once the decrement is below this share of the requested gap. */
  converged: 0.01,
  /** Face-Newton steps may use at most this many objective evaluations per solver iteration so far. */
  evaluationsPerIteration: 20,
  /** A step lowering F by less than this share of the estimated gap does not pay; the next waits… */
  payoff: 0.01,
  /** …this many oracle calls, as after a step that found no decrease (the held sides may be changing). */
  retryAfterOracleCalls: 5,
  /** A side is held only when the iterate is within this share of the interval's width from it… */
  nearShare: 0.1,
  /** …and its multiplier is above this share of the largest one. */
  multiplierShare: 1e-9,
});

/**
 * The interval sides to hold on the face: those the iterate is already close to (within a tenth of the
 * interval's width) whose multiplier from the oracle is positive — complementary slackness: at the optimum only
 * active sides carry weight. Closeness matters because the multipliers of a table whose operators sum to the
 * identity are not unique, so a side far from the iterate may carry weight without being active.
 */
export function heldIntervalSides(
  constraints: readonly LinearConstraint[],
  x: ComplexMatrix,
  multipliers: { lower: ArrayLike<number>; upper: ArrayLike<number> },
  remembered: readonly HeldSide[] = [],
): HeldSide[] {
  let largest = 0;
  constraints.forEach((_, i) => (largest = Math.max(largest, multipliers.lower[i], multipliers.upper[i])));
  const threshold = FACE_NEWTON_SCHEDULE.multiplierShare * largest;
  return constraints.map((c, i) => {
    if (c.lower === c.upper) return null;
    const v = traceProductReal(c.operator, x);
    const near = FACE_NEWTON_SCHEDULE.nearShare * (c.upper - c.lower);
    if (multipliers.lower[i] > threshold && v - c.lower <= near) return 'lower';
    if (multipliers.upper[i] > threshold && c.upper - v <= near) return 'upper';
    // A side an earlier Newton step ran into and the iterate is still at (within a thousandth of the width).
    const close = 1e-3 * (c.upper - c.lower);
    if (remembered[i] === 'lower' && v - c.lower <= close) return 'lower';
    if (remembered[i] === 'upper' && c.upper - v <= close) return 'upper';
    return null;
  });
}
