// Facial reduction by exposing directions: when the analytic centre of the feasible set is rank deficient, find
// equality multipliers y with Z = Σ y_i (b_i·1 − Γ_i) ⪰ 0 and ker Z ⊇ range(centre), record them in the feasible
// face (where src/problem/feasible-face.ts re-checks them with one eigendecomposition), and repeat on the smaller
// face until its analytic centre has full rank (Borwein & Wolkowicz 1981; Permenter & Parrilo 2018).
import { EigenvalueDecomposition, Matrix } from '../linear-algebra/ml-matrix.js';
import { ComplexMatrix, columns, conjugateAdjoint, frobeniusNorm, multiply } from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { FaceExposureError, feasibleFace, liftFromFace, restrictToFace, type FaceExposure, type FeasibleFace } from '../problem/feasible-face.js';
import { FEASIBILITY_TOLERANCE, relativeConstraintViolation } from '../problem/violation.js';
import type { LinearConstraint, Problem } from '../problem/model.js';
import { FACE_EIGENVALUE_RATIO, LinearOracle } from './linear-oracle.js';
import type { Checkpoint, OracleResult, OracleSettings } from './types.js';

/**
 * Relative mismatch accepted for equalities that become dependent on an exposed face. The face is exact only to
 * about √u (a feasible state may leave it by an angle √(u·‖Z‖/gap)), so restricted equalities that are implied by
 * the others disagree at ~1e-8; dropping an implied equality can only enlarge the set, so bounds stay valid.
 */
const EXPOSED_FACE_CONSISTENCY = 1e-6;
/** Sub-problem solves spent looking for a well-separated exposing combination. */
const EXPOSING_SEARCH_STEPS = 12;
/** Facial-reduction steps allowed (each shrinks the face by at least one dimension; real problems need one or two). */
const MAX_EXPOSURE_STEPS = 8;
/** Singular values of y ↦ Z(y)·V below this share of the largest span the candidate directions. */
const NULL_SPACE_RATIO = 1e-6;
/** Passes that re-align the kernel of Z with the face it should expose (each re-projects y). */
const REFINEMENT_PASSES = 3;
/**
 * Gram eigenvalues below this share of the largest, or of 1 (the directions have unit norm), are left out of the
 * corrections: the candidate directions themselves, and on a one-point face every direction (V†A_iV = 0 for all i
 * there, so the Gram matrix is rounding and a relative cut alone amplified 1e-17 residuals into 1e-2 steps, d4#10).
 */
const GRAM_CUTOFF = NULL_SPACE_RATIO * NULL_SPACE_RATIO;
/** Sizes of the sparse exposures tried, largest weights first (docs/faces.md, "Tilted kernels"). */
const SPARSE_SUPPORTS = [1, 2, 3, 4, 6, 8, 12, 16, 24, 32, 48, 64, 96, 128];
/** A face whose centre meets the constraints this well (relative to ‖Γ‖_F) is exact to rounding: the search stops. */
const ROUNDING_VIOLATION = 1e-13;

export interface ExposedFace {
  /** The feasible face with every accepted exposure recorded (pass `face.exposures` to feasibleFace to recompute it). */
  face: FeasibleFace;
  /** The problem restated on that face. */
  restricted: Problem;
  /** The oracle on that face and its feasibility answer, for reuse by the caller. */
  oracle: LinearOracle;
  feasible: OracleResult;
}

export interface ExposeOptions {
  checkpoint?: Checkpoint;
  settings?: Partial<OracleSettings>;
}

/**
 * The exact reductions of feasibleFace, then exposing steps while the analytic centre of the feasible set on the
 * current face is rank deficient. Every exposure is accepted only if feasibleFace's own check accepts it.
 */
export function exposeFeasibleFace(problem: Problem, options: ExposeOptions = {}): ExposedFace {
  const { checkpoint } = options;
  const exposures: FaceExposure[] = [];
  const onFace = (face: FeasibleFace): ExposedFace => {
    const restricted = restrictToFace(problem, face);
    const oracle = new LinearOracle(face.dimension, restricted.constraints, {
      ...options.settings,
      checkpoint,
      ...(face.exposures.length > 0 ? { impliedEqualityTolerance: EXPOSED_FACE_CONSISTENCY } : {}),
    });
    return { face, restricted, oracle, feasible: oracle.findFeasiblePoint() };
  };
  let current = onFace(feasibleFace(problem, { checkpoint }));
  for (let step = 0; step < MAX_EXPOSURE_STEPS; step++) {
    const { feasible, face } = current;
    // A point from a run that stalled on the missing interior still shows the face; the exposure is checked anyway.
    if (feasible.status === 'INFEASIBLE' || !feasible.point) return current;
    const restated = restrictToFace(problem, face).constraints;
    const multipliers = exposingMultipliers(restated, feasible.point, checkpoint);
    if (!multipliers) return current;
    // Sparse exposures first (their kernels are not tilted by the noise on the small weights): among those that
    // feasibleFace accepts and whose face's centre meets the original constraints, the one whose centre meets them
    // best, stopping at rounding; otherwise the exposure as found.
    const directions = equalityDirections(restated, feasible.point.rows);
    const rank = feasible.point.rows - vanishingEigenvalues(eigvalsh(feasible.point));
    let sparse: { multipliers: number[]; onFace: ExposedFace; violation: number } | null = null;
    for (const support of SPARSE_SUPPORTS) {
      const candidate = sparseExposure(restated.length, directions, multipliers, rank, support, checkpoint);
      if (candidate === 'not smaller') break;
      const sparseFace = candidate && tryExposure(problem, exposures, candidate, checkpoint);
      if (!candidate || !sparseFace) continue;
      const onSparse = onFace(sparseFace);
      const violation = centreViolation(problem, onSparse);
      if (violation <= FEASIBILITY_TOLERANCE && !(sparse && sparse.violation <= violation)) {
        sparse = { multipliers: candidate, onFace: onSparse, violation };
      }
      if (violation <= ROUNDING_VIOLATION) break;
    }
    if (sparse) {
      exposures.push({ multipliers: sparse.multipliers });
      current = sparse.onFace;
      continue;
    }
    const next = tryExposure(problem, exposures, multipliers, checkpoint);
    if (!next) return current;
    exposures.push({ multipliers });
    current = onFace(next);
  }
  return current;
}

/** The face with one more exposure, or null when feasibleFace's check rejects it. */
function tryExposure(problem: Problem, exposures: readonly FaceExposure[], multipliers: number[], checkpoint?: Checkpoint): FeasibleFace | null {
  try {
    return feasibleFace(problem, { exposures: [...exposures, { multipliers }], checkpoint });
  } catch (error) {
    if (error instanceof FaceExposureError) return null;
    throw error;
  }
}

/** How far the face's analytic centre, lifted to H_A ⊗ H_B, misses the original constraints (relative to ‖Γ‖_F). */
function centreViolation(problem: Problem, exposed: ExposedFace): number {
  const { feasible, face } = exposed;
  return feasible.point ? relativeConstraintViolation(problem, liftFromFace(face, feasible.point)) : Infinity;
}

/**
 * The solver's entry: when the most interior feasible point found is rank deficient, the face exposed in one step
 * with a finite leak and a full-rank analytic centre on it (the only case docs/faces.md derives a bound on a face
 * for); null otherwise, and the caller keeps its face.
 */
export function exposeIfRankDeficient(
  problem: Problem,
  /** Whether a bound on an exposed face is derived for this problem and kind (the caller knows; docs/faces.md). */
  faceBoundDerived: () => boolean,
  feasible: OracleResult,
  options: ExposeOptions = {},
): ExposedFace | null {
  if (feasible.status === 'INFEASIBLE' || !feasible.point) return null;
  // A run that failed on the missing interior (NUMERICAL_ERROR, ITERATION_LIMIT) still shows the face in its point.
  const values = eigvalsh(feasible.point);
  const n = values.length;
  if (feasible.status === 'OPTIMAL' && values[0] > FACE_EIGENVALUE_RATIO * values[n - 1]) return null;
  if (!faceBoundDerived()) return null;
  const exposed = exposeFeasibleFace(problem, options);
  const { face, feasible: onFace } = exposed;
  if (face.exposures.length !== 1 || !Number.isFinite(face.leak ?? Infinity)) return null;
  if (onFace.status !== 'OPTIMAL' || !onFace.point) return null;
  const inner = eigvalsh(onFace.point);
  if (!(inner[0] > FACE_EIGENVALUE_RATIO * inner[inner.length - 1])) return null;
  // Restated equalities agree on the face only to about √u: its centre must still meet the original constraints,
  // or the face would yield neither a feasible final state nor a trustworthy infeasibility verdict.
  return relativeConstraintViolation(problem, liftFromFace(face, onFace.point)) <= FEASIBILITY_TOLERANCE ? exposed : null;
}

/**
 * Signed multipliers (one per constraint, nonzero on equalities only) with Z ⪰ 0 vanishing on the range V of the
 * rank-deficient centre and positive on its complement W; null when the centre has full rank or no such
 * combination exists in one step. Directions: the null space of y ↦ Z(y)·V; among them, c with W†Z(c)W ≻ 0 is a
 * Farkas certificate of {τ ⪰ 0 on W, Tr τ = 1, Tr(W†Z_j W τ) = 0}, which the oracle finds when that set is empty.
 */
export function exposingMultipliers(constraints: readonly LinearConstraint[], centre: ComplexMatrix, checkpoint?: Checkpoint): number[] | null {
  const n = centre.rows;
  const { values, vectors } = eigh(centre);
  const kernel = vanishingEigenvalues(values);
  if (kernel === 0 || kernel === n) return null;
  const directions = equalityDirections(constraints, n);
  if (directions.length === 0) return null;
  checkpoint?.();
  const range = columns(vectors, kernel, n);
  const complement = columns(vectors, 0, kernel);
  const candidates = nullSpace(directions.map((d) => d.matrix), range, NULL_SPACE_RATIO);
  if (candidates.length === 0) return null;
  const combine = (weights: ArrayLike<number>) => combination(directions.map((d) => d.matrix), weights);
  const onComplement = candidates.map((w) => conjugateAdjoint(complement, combine(w)));
  const best = bestExposingCombination(onComplement, checkpoint);
  if (!best) return null;
  const weights = new Float64Array(directions.length);
  candidates.forEach((w, j) => {
    for (let i = 0; i < w.length; i++) weights[i] += best[j] * w[i];
  });
  refineWeights(directions.map((d) => d.matrix), weights, n - kernel, checkpoint);
  return multipliersFromWeights(constraints.length, directions, weights);
}

/** How many of the centre's (ascending) eigenvalues mark directions no feasible state uses. */
function vanishingEigenvalues(values: Float64Array): number {
  const n = values.length;
  let count = 0;
  while (count < n && values[count] <= FACE_EIGENVALUE_RATIO * values[n - 1]) count++;
  return count;
}

/**
 * The exposure kept on its `support` largest weights (on the normalised directions) and refitted there; null when
 * the refit leaves nothing, 'not smaller' when the exposure has no more nonzero weights than that. The noise an
 * interior-point answer leaves on every equality can lie where Z's kernel block stays zero and only its cross block
 * to the complement grows: that tilts ker Z by noise·‖Γ‖/λ_W while Z's eigenvalues move only at second order, below
 * their rounding, so no refinement from Z alone sees it (measured on d16#2: weights of 2e-8 to 5e-7 of the largest,
 * a tilt of 1.5e-6). Where an exposure on few equalities exists, dropping the rest removes that noise, and on the
 * kept directions any remaining error moves Z's kernel block at first order, which the refinement removes.
 * `directions` and the centre's `rank` are the caller's, computed once for every support tried.
 */
function sparseExposure(
  constraintCount: number,
  directions: readonly EqualityDirection[],
  multipliers: readonly number[],
  rank: number,
  support: number,
  checkpoint?: Checkpoint,
): number[] | null | 'not smaller' {
  const nonzero = directions.filter((d) => multipliers[d.index] !== 0);
  if (nonzero.length <= support) return 'not smaller';
  const kept = nonzero
    .map((d) => ({ d, weight: multipliers[d.index] * d.norm }))
    .sort((a, b) => Math.abs(b.weight) - Math.abs(a.weight))
    .slice(0, support);
  const weights = Float64Array.from(kept, (k) => k.weight);
  refineWeights(kept.map((k) => k.d.matrix), weights, rank, checkpoint);
  return multipliersFromWeights(constraintCount, kept.map((k) => k.d), weights);
}

/**
 * The centre's range is only as accurate as its small eigenvalues are small: Gauss–Newton corrections of y
 * (least-squares, minimum norm) make Z vanish on its own near-kernel (of dimension `rank`) until rounding is all
 * that is left. In place.
 */
function refineWeights(matrices: readonly ComplexMatrix[], weights: Float64Array, rank: number, checkpoint?: Checkpoint): void {
  for (let pass = 0; pass < 2 * REFINEMENT_PASSES; pass++) {
    checkpoint?.();
    const z = combination(matrices, weights);
    const range = columns(eigh(z).vectors, 0, rank);
    // Newton on the small eigenvalues: to first order they move by V†Z(Δy)V (the off-diagonal block only at second).
    // Then the whole product Z·V: the off-diagonal block tilts ker Z away from the face (only to second order in
    // the eigenvalues, but to first order in the face's angle).
    const blockOnly = pass < REFINEMENT_PASSES;
    const correction = blockOnly
      ? leastSquaresCorrection(matrices.map((a) => conjugateAdjoint(range, a)), conjugateAdjoint(range, z))
      : leastSquaresCorrection(matrices.map((a) => multiply(a, range)), multiply(z, range));
    for (let i = 0; i < weights.length; i++) weights[i] -= correction[i];
  }
}

interface EqualityDirection {
  index: number;
  /** A_i = (b_i·1 − Γ_i)/‖·‖_F: Tr(A_i ρ) = 0 for every feasible ρ. */
  matrix: ComplexMatrix;
  norm: number;
}

function equalityDirections(constraints: readonly LinearConstraint[], n: number): EqualityDirection[] {
  return constraints.flatMap((c, index) => {
    if (c.lower !== c.upper) return [];
    const a = ComplexMatrix.zeros(n);
    for (let t = 0; t < n * n; t++) {
      a.re[t] = -c.operator.re[t];
      a.im[t] = -c.operator.im[t];
    }
    for (let k = 0; k < n; k++) a.re[k * n + k] += c.lower;
    const norm = frobeniusNorm(a);
    return [{ index, matrix: norm > 0 ? scaled(a, 1 / norm) : a, norm }];
  });
}

/** One multiplier per constraint from weights on the normalised directions, scaled to a largest weight of 1. */
function multipliersFromWeights(count: number, directions: readonly EqualityDirection[], weights: ArrayLike<number>): number[] | null {
  let largest = 0;
  for (let k = 0; k < weights.length; k++) largest = Math.max(largest, Math.abs(weights[k]));
  if (!(largest > 0)) return null;
  const multipliers = new Array<number>(count).fill(0);
  directions.forEach((d, k) => {
    if (d.norm > 0) multipliers[d.index] = weights[k] / (largest * d.norm);
  });
  return multipliers;
}

/** The sub-problem's half-width when its equality form gives no answer (the B_j have norm at most 1). */
const EXPOSING_FALLBACK_SLACK = 1e-10;

/**
 * c with λ_min(Σ c_j B_j) > s·‖c‖₁ for s as large as a few bisection steps find: the sub-problem
 * {τ ⪰ 0, Tr τ = 1, −s ≤ Tr(B_j τ) ≤ s} is empty exactly then, and its Farkas certificate is such a c. A large s
 * keeps Z well separated from zero on the exposed part, so rounding cannot blur its kernel.
 */
function bestExposingCombination(operators: readonly ComplexMatrix[], checkpoint: Checkpoint | undefined): Float64Array | null {
  const attempt = (s: number): Float64Array | null => {
    checkpoint?.();
    const constraints = operators.map((operator, j) => ({ label: `candidate-${j}`, operator, lower: -s, upper: s }));
    const answer = new LinearOracle(operators[0].rows, constraints, { checkpoint }).findFeasiblePoint();
    if (answer.status !== 'INFEASIBLE' || !answer.infeasibility) return null;
    const { multipliersLower, multipliersUpper } = answer.infeasibility;
    return Float64Array.from(multipliersLower, (lower, j) => multipliersUpper[j] - lower);
  };
  // The equality form (s = 0) can end without either answer (d32#19: its interior-point run diverged); the interval
  // form at a tiny s contains that set, so a Farkas certificate found there serves as well.
  let best = attempt(0) ?? attempt(EXPOSING_FALLBACK_SLACK);
  if (!best) return null;
  const ratio = (c: Float64Array): number => {
    let size = 0;
    for (const x of c) size += Math.abs(x);
    return eigvalsh(combination(operators, c))[0] / size;
  };
  let low = Math.max(ratio(best), 0);
  let high = Infinity;
  for (let step = 0; step < EXPOSING_SEARCH_STEPS; step++) {
    const s = high === Infinity ? Math.max(4 * low, Number.MIN_VALUE) : Math.sqrt(low * high);
    const found = attempt(s);
    if (found) {
      best = found;
      low = Math.max(s, ratio(found));
    } else {
      high = s;
    }
    if (high < Infinity && high <= 1.5 * low) break;
  }
  return best;
}

/** Minimum-norm Δy with Σ Δy_i B_i ≈ R in least squares (pseudo-inverse from the Gram matrix, small modes cut). */
function leastSquaresCorrection(products: readonly ComplexMatrix[], residual: ComplexMatrix): Float64Array {
  // Products of unit-norm directions with an isometry: each has norm at most 1, the scale the cut is taken against.
  const { evd } = gramDecomposition(products);
  const k = products.length;
  const rhs = new Float64Array(k);
  products.forEach((p, i) => {
    let s = 0;
    for (let t = 0; t < p.re.length; t++) s += p.re[t] * residual.re[t] + p.im[t] * residual.im[t];
    rhs[i] = s;
  });
  const eigenvalues = evd.realEigenvalues;
  const largest = Math.max(...eigenvalues.map(Math.abs), 1);
  const out = new Float64Array(k);
  eigenvalues.forEach((value, j) => {
    if (!(value > GRAM_CUTOFF * largest)) return;
    const v = evd.eigenvectorMatrix.getColumn(j);
    let dot = 0;
    for (let i = 0; i < k; i++) dot += v[i] * rhs[i];
    for (let i = 0; i < k; i++) out[i] += (dot / value) * v[i];
  });
  return out;
}

function gramDecomposition(products: readonly ComplexMatrix[]): { evd: EigenvalueDecomposition } {
  const k = products.length;
  const gram = new Matrix(k, k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      const p = products[i];
      const q = products[j];
      let s = 0;
      for (let t = 0; t < p.re.length; t++) s += p.re[t] * q.re[t] + p.im[t] * q.im[t];
      gram.set(i, j, s);
      gram.set(j, i, s);
    }
  }
  return { evd: new EigenvalueDecomposition(gram, { assumeSymmetric: true }) };
}

/** Orthonormal real vectors w spanning {w : ‖Σ w_i A_i·V‖ ≤ ratio·σ_max} (from the Gram matrix of the A_i·V). */
function nullSpace(matrices: readonly ComplexMatrix[], range: ComplexMatrix, ratio: number): Float64Array[] {
  const { evd } = gramDecomposition(matrices.map((a) => multiply(a, range)));
  const eigenvalues = evd.realEigenvalues;
  const largest = Math.max(...eigenvalues.map(Math.abs), 0);
  const out: Float64Array[] = [];
  eigenvalues.forEach((value, j) => {
    if (value <= ratio * ratio * largest) out.push(Float64Array.from(evd.eigenvectorMatrix.getColumn(j)));
  });
  return out;
}

function combination(matrices: readonly ComplexMatrix[], weights: ArrayLike<number>): ComplexMatrix {
  const n = matrices[0].rows;
  const out = ComplexMatrix.zeros(n);
  matrices.forEach((m, i) => {
    const w = weights[i];
    if (w === 0) return;
    for (let t = 0; t < n * n; t++) {
      out.re[t] += w * m.re[t];
      out.im[t] += w * m.im[t];
    }
  });
  return out;
}

function scaled(a: ComplexMatrix, s: number): ComplexMatrix {
  const out = a.clone();
  for (let t = 0; t < out.re.length; t++) {
    out.re[t] *= s;
    out.im[t] *= s;
  }
  return out;
}
