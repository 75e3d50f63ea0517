// Newton steps along the central path of F − μ·(log det ρ + Σ log interval slacks) on the equalities' affine set:
// for optima with no clear rank gap (eigenvalues tapering towards zero), where Frank–Wolfe crawls and the
// rank-manifold steps have no rank to choose (docs/convergence.md, "The central path").
import { Matrix, pseudoInverse, QrDecomposition, SingularValueDecomposition } from '../linear-algebra/ml-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  hermitianPart,
  multiply,
  traceProductReal,
} from '../linear-algebra/complex-matrix.js';
import type { LinearConstraint } from '../problem/model.js';
import { dampedNewton, meetsHeldRows, type FaceEvaluation } from './face-newton.js';
import { addHermitianCoordinates, dot, hermitianCoordinates } from './rank-manifold.js';

export interface CentralPathOptions {
  /** The barrier weight of the first centring. */
  startWeight: number;
  /** The path is followed until the weight is at most this. */
  endWeight: number;
  /** Each centring multiplies the weight by this. */
  reduction: number;
  /** Newton steps per weight at most. */
  stepsPerWeight: number;
  /** Largest number of real tangent coordinates for which the Hessian is formed (one evaluation each). */
  maxTangentDimension: number;
  /**
   * Largest n² for which frames with more tangent coordinates than that take Hessian-free steps instead (conjugate
   * gradients on difference products, one evaluation each); larger problems are not attempted.
   */
  maxHessianFreeDimension: number;
}

export const DEFAULT_CENTRAL_PATH: Readonly<Omit<CentralPathOptions, 'startWeight' | 'endWeight'>> = Object.freeze({
  reduction: 0.1,
  stepsPerWeight: 3,
  // n² at n = 20: d64#4's 20-dimensional face (284 tangent coordinates, its 169 rows being dependent) needs the path;
  // Frank–Wolfe alone crawled to a gap of 1.3e-2 in 60 s there (docs/convergence.md).
  maxTangentDimension: 400,
  // n = 32 on the whole space (d32#3 of the suite: about 1000 tangent coordinates; formed Hessians took all of 30 s).
  maxHessianFreeDimension: 1024,
});

/** Forward-difference step in the scaled coordinates: ρ + h·ρ^½Dρ^½ moves every eigenvalue by at most a share h. */
const DIFFERENCE_STEP = 1e-4;
/** A step goes at most this share of the way to the cone's or an interval's boundary. */
const TO_BOUNDARY = 0.95;
/** Armijo's sufficient-decrease share of the Newton decrement. */
const ARMIJO = 0.25;
/** Halvings of a Newton step before the centring gives up. */
const BACKTRACKS = 30;
/** A centring ends once the Newton decrement is below this share of the weight. */
const CENTRED = 0.1;
/** Conjugate-gradient iterations per Hessian-free Newton step at most (each one evaluation of F)… */
const CG_ITERATIONS = 100;
/** …stopping once the residual is below this share of the gradient (an inexact Newton step). */
const CG_TOLERANCE = 0.01;
/** Hessian-free Newton steps per weight at most (each costs up to CG_ITERATIONS evaluations, not k). */
const HESSIAN_FREE_STEPS = 10;

/**
 * The barrier parameter ν of the log-det barrier of an n×n state plus one per finite interval side: on the
 * central path the Frank–Wolfe gap is at most μ·ν (derived in docs/convergence.md).
 */
export function barrierParameter(n: number, constraints: readonly LinearConstraint[]): number {
  return n + intervalSides(constraints).length;
}

/** At least n² − (equalities + 1) tangent coordinates: decided before any n³ work (d = 128 has 16,384). */
function tooManyCoordinates(n: number, constraints: readonly LinearConstraint[], maxTangentDimension: number): boolean {
  const equalities = constraints.filter((c) => c.lower === c.upper).length;
  return n * n - (equalities + 1) > maxTangentDimension;
}

/** Whether neither kind of frame can take the problem: too many tangent coordinates and n² above the Hessian-free cap. */
export function beyondCentralPath(n: number, constraints: readonly LinearConstraint[], options: Pick<CentralPathOptions, 'maxTangentDimension' | 'maxHessianFreeDimension'>): boolean {
  return tooManyCoordinates(n, constraints, options.maxTangentDimension) && n * n > options.maxHessianFreeDimension;
}

/** One interval side as the barrier sees it: ⟨Γ, ρ⟩ − lower (sign +1) or upper − ⟨Γ, ρ⟩ (sign −1). */
interface Side {
  operator: ComplexMatrix;
  sign: 1 | -1;
  bound: number;
}

function intervalSides(constraints: readonly LinearConstraint[]): Side[] {
  const sides: Side[] = [];
  for (const c of constraints) {
    if (c.lower === c.upper) continue;
    if (Number.isFinite(c.lower)) sides.push({ operator: c.operator, sign: 1, bound: c.lower });
    if (Number.isFinite(c.upper)) sides.push({ operator: c.operator, sign: -1, bound: c.upper });
  }
  return sides;
}

/** a·m·a for Hermitian a and m (the scalings of this module), made exactly Hermitian. */
function sandwich(a: ComplexMatrix, m: ComplexMatrix): ComplexMatrix {
  return hermitianPart(multiply(multiply(a, m), a));
}

function slackOf(side: Side, state: ComplexMatrix): number {
  return side.sign * (traceProductReal(side.operator, state) - side.bound);
}

/** What the path reached: the last centred point, and how many weights were centred. */
export interface CentralPathOutcome<E extends FaceEvaluation> {
  point: ComplexMatrix;
  evaluation: E;
  weight: number;
  centrings: number;
}

/**
 * Follows the central path from a feasible, positive definite x: for each weight μ (from startWeight down by
 * `reduction`), damped Newton steps on φ_μ = F − μ·(log det ρ + Σ log slacks) in the tangent space of the
 * equalities. The coordinates are scaled, D ↦ ρ^½·D·ρ^½ (the barrier's Hessian at ρ is E ↦ ρ⁻¹Eρ⁻¹), so that the
 * log-det barrier's Hessian is the identity and a forward difference of ∇F moves every eigenvalue by the same
 * share however small it is. Each centred point is handed to `accept` with its weight (so a time limit keeps the
 * progress); returns the last one, or null when no step lowered φ.
 */
export function followCentralPath<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  constraints: readonly LinearConstraint[],
  evaluate: (state: ComplexMatrix) => E | null,
  options: CentralPathOptions,
  accept: (point: ComplexMatrix, evaluation: E, weight: number) => void,
): CentralPathOutcome<E> | null {
  if (beyondCentralPath(x.rows, constraints, options)) return null;
  const equalities = constraints.filter((c) => c.lower === c.upper);
  const sides = intervalSides(constraints);
  const held = constraints.map(() => null);
  let here = { point: x, evaluation: current };
  let outcome: CentralPathOutcome<E> | null = null;
  for (let weight = options.startWeight, centrings = 0; ; weight *= options.reduction) {
    const centred = centre(here.point, here.evaluation, equalities, sides, evaluate, weight, options);
    if (centred === 'too-large') return null;
    if (centred !== null) here = centred;
    // Rounding in the steps must not move ρ off its equalities: a point that no longer meets them ends the path.
    if (centred !== null) {
      outcome = { ...here, weight, centrings: ++centrings };
      accept(here.point, here.evaluation, weight);
    }
    if (weight <= options.endWeight) return outcome;
  }
}

/** Newton steps on φ_μ from x; null when none lowered it, 'too-large' when the tangent space is too large. */
function centre<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  equalities: readonly LinearConstraint[],
  sides: readonly Side[],
  evaluate: (state: ComplexMatrix) => E | null,
  weight: number,
  options: CentralPathOptions,
): { point: ComplexMatrix; evaluation: E } | null | 'too-large' {
  let here: { point: ComplexMatrix; evaluation: E } | null = null;
  for (let taken = 0; taken < options.stepsPerWeight; ) {
    const from: { point: ComplexMatrix; evaluation: E } = here ?? { point: x, evaluation: current };
    const budget = options.stepsPerWeight - taken;
    const framed: ReturnType<typeof stepsInFrame<E>> = stepsInFrame(
      from.point,
      from.evaluation,
      { equalities, sides, evaluate, weight, budget },
      options,
    );
    if (framed === 'too-large') return framed;
    if (framed.taken === 0) break;
    here = framed;
    taken += framed.taken;
    if (framed.centred) break;
  }
  return here;
}

/** What one frame works on: the rows, the barrier's sides, the weight μ and how many steps are left. */
interface FrameTask<E extends FaceEvaluation> {
  equalities: readonly LinearConstraint[];
  sides: readonly Side[];
  evaluate: (state: ComplexMatrix) => E | null;
  weight: number;
  budget: number;
}

/**
 * Newton steps of one weight in one frame, built at x: the scaling ρ_x^½, the tangent basis and F's Hessian by
 * differences (k evaluations). Full steps reuse the frame (F's Hessian changes little in these coordinates while
 * Newton converges); a step the line search cut, or a small decrement from the reused Hessian, ends it, so that
 * the next frame is built where the steps have led.
 */
function stepsInFrame<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  { equalities, sides, evaluate, weight, budget }: FrameTask<E>,
  options: CentralPathOptions,
): { point: ComplexMatrix; evaluation: E; taken: number; centred: boolean } | 'too-large' {
  const none = { point: x, evaluation: current, taken: 0, centred: false };
  const n = x.rows;
  const m = n * n;
  const { values, vectors } = eigh(x);
  if (!(values[0] > 0)) return none;
  const half = conjugate(vectors, ComplexMatrix.diagonal(Array.from(values, Math.sqrt)));
  const coordinatesOf = (a: ComplexMatrix) => {
    const out = new Float64Array(m);
    hermitianCoordinates(a, out);
    return out;
  };
  const scaled = (a: ComplexMatrix) => coordinatesOf(sandwich(half, a));
  // Trace (ρ^½·1·ρ^½ = ρ) and the equalities, in scaled coordinates; their null space is the tangent space.
  const rows = [scaled(ComplexMatrix.identity(n)), ...equalities.map((c) => scaled(c.operator))];
  // Too many coordinates to form the Hessian (decided before the m×m QR when the count alone says so).
  const hessianFree = () =>
    m <= options.maxHessianFreeDimension
      ? hessianFreeSteps(x, current, { equalities, sides, evaluate, weight, budget }, { half, rows, coordinatesOf })
      : 'too-large';
  if (m - rows.length > options.maxTangentDimension) return hessianFree();
  const tangent = nullSpace(rows, m);
  const k = tangent.length;
  if (k > options.maxTangentDimension) return hessianFree();
  if (k === 0) return none;
  const reduce = (full: Float64Array) => {
    const out = new Float64Array(k);
    for (let j = 0; j < k; j++) out[j] = dot(tangent[j], full);
    return out;
  };
  const innerOf = (coordinates: ArrayLike<number>) => fromCoordinates(n, coordinates);
  const outerOf = (inner: ComplexMatrix) => sandwich(half, inner);
  const directions = tangent.map(innerOf);
  const sideRows = sides.map((s) => reduce(scaled(s.operator)));

  // Forward differences of ∇F along each scaled tangent direction.
  const differences = new Matrix(k, k);
  for (let j = 0; j < k; j++) {
    const difference = gradientChange(x, current, outerOf(directions[j]), DIFFERENCE_STEP, evaluate);
    if (!difference) return none;
    const column = reduce(scaled(difference));
    for (let i = 0; i < k; i++) differences.set(i, j, column[i] / DIFFERENCE_STEP);
  }

  let point = x;
  let evaluation = current;
  let taken = 0;
  let centred = false;
  // A = ρ_x^{-½}·ρ·ρ_x^{-½} = 1 + Σ t·D over the steps taken in this frame (never formed from an inverse of ρ):
  // at ρ the barrier's gradient is Tr(A⁻¹D) and its Hessian Tr(A⁻¹D_iA⁻¹D_j); at x both are those of A = 1.
  const shape = ComplexMatrix.identity(n);
  for (let step = 0; step < budget; step++) {
    const terms = barrierTerms(shape, sides, point);
    if (terms === null) break;
    const { inverse, inverseHalf, slacks } = terms;

    // ∇φ in the frame's tangent coordinates: ρ_x^½∇Fρ_x^½ − μ·A⁻¹ − μ·Σ sign·ρ_x^½Γρ_x^½/slack.
    const gradient = reduce(scaled(evaluation.gradient));
    const barrierRow = reduce(coordinatesOf(inverse));
    for (let j = 0; j < k; j++) {
      gradient[j] -= weight * barrierRow[j];
      sides.forEach((s, q) => (gradient[j] -= (weight * s.sign * sideRows[q][j]) / slacks[q]));
    }
    // The barrier's Hessian: the identity in the frame's own step, Tr(A⁻¹D_iA⁻¹D_j) after it.
    const barrier = step === 0 ? null : directions.map((d) => reduce(coordinatesOf(sandwich(inverse, d))));
    const symmetric = new Matrix(k, k);
    for (let i = 0; i < k; i++) {
      for (let j = i; j < k; j++) {
        let entry = 0.5 * (differences.get(i, j) + differences.get(j, i));
        entry += weight * (barrier === null ? (i === j ? 1 : 0) : 0.5 * (barrier[j][i] + barrier[i][j]));
        sides.forEach((_, q) => (entry += (weight * sideRows[q][i] * sideRows[q][j]) / slacks[q] ** 2));
        // One triangle mirrored: the Cholesky factorisation insists on exact symmetry.
        symmetric.set(i, j, entry);
        symmetric.set(j, i, entry);
      }
    }
    // Rounding at a nearly singular point can make a difference non-finite: the centring stops there.
    if (!symmetric.to1DArray().every(Number.isFinite) || !gradient.every(Number.isFinite)) break;
    const newton = dampedNewton(symmetric)?.solve(gradient);
    if (!newton || !(newton.decrement > 0)) break;
    const combined = new Float64Array(m);
    tangent.forEach((t, j) => {
      for (let i = 0; i < m; i++) combined[i] += newton.coefficients[j] * t[i];
    });
    const inner = innerOf(combined);
    const accepted = barrierLineStep({ point, evaluation, inner, decrement: newton.decrement, weight, sides, slacks, inverseHalf, half, evaluate });
    if (accepted === null) break;
    point = accepted.point;
    evaluation = accepted.evaluation;
    addScaledInPlace(shape, inner, accepted.t);
    taken++;
    // Only a fresh frame's decrement says the point is centred; a small one from a reused Hessian asks for a new frame.
    centred = step === 0 && newton.decrement <= CENTRED * weight;
    if (newton.decrement <= CENTRED * weight || accepted.t < accepted.longest) break;
  }
  return { point, evaluation, taken, centred };
}

/** ∇F(x + t·D) − ∇F(x), one evaluation (the forward difference both kinds of frame take); null where F has none. */
function gradientChange<E extends FaceEvaluation>(
  x: ComplexMatrix,
  at: E,
  direction: ComplexMatrix,
  t: number,
  evaluate: (state: ComplexMatrix) => E | null,
): ComplexMatrix | null {
  const probe = x.clone();
  addScaledInPlace(probe, direction, t);
  const e = evaluate(probe);
  if (!e) return null;
  const change = e.gradient.clone();
  addScaledInPlace(change, at.gradient, -1);
  return change;
}

/** The Hermitian n×n matrix with the given coordinates (the inverse of `hermitianCoordinates`). */
function fromCoordinates(n: number, coordinates: ArrayLike<number>): ComplexMatrix {
  const inner = ComplexMatrix.zeros(n);
  addHermitianCoordinates(inner, coordinates);
  return inner;
}

/** A⁻¹, A^{-½} and the sides' slacks at ρ; null when A or a slack is no longer positive. */
function barrierTerms(shape: ComplexMatrix, sides: readonly Side[], point: ComplexMatrix): { inverse: ComplexMatrix; inverseHalf: ComplexMatrix; slacks: number[] } | null {
  const shapeEigen = eigh(shape);
  if (!(shapeEigen.values[0] > 0)) return null;
  const slacks = sides.map((s) => slackOf(s, point));
  if (!slacks.every((v) => v > 0)) return null;
  const inverse = conjugate(shapeEigen.vectors, ComplexMatrix.diagonal(Array.from(shapeEigen.values, (v) => 1 / v)));
  const inverseHalf = conjugate(shapeEigen.vectors, ComplexMatrix.diagonal(Array.from(shapeEigen.values, (v) => 1 / Math.sqrt(v))));
  return { inverse, inverseHalf, slacks };
}

/** What one damped step along a Newton direction needs (the frame's scaling ρ_x^½ and A's inverse square root). */
interface LineStepTask<E extends FaceEvaluation> {
  point: ComplexMatrix;
  evaluation: E;
  /** The direction D in the frame's scaled coordinates (the move is ρ_x^½·D·ρ_x^½). */
  inner: ComplexMatrix;
  decrement: number;
  weight: number;
  sides: readonly Side[];
  slacks: readonly number[];
  inverseHalf: ComplexMatrix;
  half: ComplexMatrix;
  evaluate: (state: ComplexMatrix) => E | null;
}

/**
 * ρ + t·ρ_x^½Dρ_x^½ = ρ_x^½(A + tD)ρ_x^½: the longest step keeping it and every slack positive, from the eigenvalues
 * of A^{-½}DA^{-½}, then halved until φ_μ decreases by ARMIJO·t·decrement; null when no halving does.
 */
function barrierLineStep<E extends FaceEvaluation>(task: LineStepTask<E>): { point: ComplexMatrix; evaluation: E; t: number; longest: number } | null {
  const { point, evaluation, inner, decrement, weight, sides, slacks, inverseHalf, half, evaluate } = task;
  const move = sandwich(half, inner);
  const innerValues = eigvalsh(sandwich(inverseHalf, inner));
  let longest = 1;
  if (innerValues[0] < 0) longest = Math.min(longest, -TO_BOUNDARY / innerValues[0]);
  const sideRates = sides.map((s) => s.sign * traceProductReal(s.operator, move));
  sideRates.forEach((rate, q) => {
    if (rate < 0) longest = Math.min(longest, (-TO_BOUNDARY * slacks[q]) / rate);
  });
  const barrierChange = (t: number) => {
    let change = 0;
    for (const v of innerValues) change += Math.log1p(t * v);
    sideRates.forEach((rate, q) => (change += Math.log1p((t * rate) / slacks[q])));
    return change;
  };
  for (let t = longest, tries = 0; tries <= BACKTRACKS; tries++, t /= 2) {
    const candidate = point.clone();
    addScaledInPlace(candidate, move, t);
    const e = evaluate(candidate);
    if (!e) continue;
    const decrease = evaluation.value - e.value + weight * barrierChange(t);
    if (decrease >= ARMIJO * t * decrement) return { point: candidate, evaluation: e, t, longest };
  }
  return null;
}

/** The frame's scaling and rows, shared with the Hessian-free steps. */
interface FrameBasics {
  half: ComplexMatrix;
  /** Trace and equality rows in scaled coordinates (their orthogonal complement is the tangent space). */
  rows: readonly Float64Array[];
  coordinatesOf: (a: ComplexMatrix) => Float64Array;
}

/**
 * Newton steps of one weight where the tangent space is too large to form F's Hessian (docs/convergence.md, "The
 * central path"): the same scaled coordinates, the tangent space as the projection P = 1 − Rᵀ(RRᵀ)⁺R onto the
 * rows' complement, and each Newton system (H_F + μ·H_barrier + side terms)·d = −g solved inexactly by conjugate
 * gradients on P, with H_F·v a forward difference of ∇F at the current point (one evaluation per product). A
 * direction of non-positive curvature ends the iteration with the step so far (Steihaug). The line search and the
 * bookkeeping of A are those of the formed frames.
 */
function hessianFreeSteps<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  { sides, evaluate, weight }: FrameTask<E>,
  { half, rows, coordinatesOf }: FrameBasics,
): { point: ComplexMatrix; evaluation: E; taken: number; centred: boolean } {
  const n = x.rows;
  const none = { point: x, evaluation: current, taken: 0, centred: false };
  // Unit rows (as nullSpace scales them), and the projection applied twice: one pass leaves rounding of the order
  // of the Gram matrix's condition, which moved ρ off its equalities and ended the path.
  const units = rows.map((row) => {
    const length = Math.sqrt(dot(row, row)) || 1;
    return Float64Array.from(row, (v) => v / length);
  });
  const r = new Matrix(units.map((row) => Array.from(row)));
  const gramInverse = pseudoInverse(r.mmul(r.transpose()));
  const projectOnce = (v: Float64Array) => {
    const w = gramInverse.mmul(Matrix.columnVector(units.map((row) => dot(row, v)))).getColumn(0);
    const out = Float64Array.from(v);
    units.forEach((row, q) => {
      for (let i = 0; i < out.length; i++) out[i] -= w[q] * row[i];
    });
    return out;
  };
  const project = (v: Float64Array) => projectOnce(projectOnce(v));
  const innerOf = (coordinates: ArrayLike<number>) => fromCoordinates(n, coordinates);
  const sideRows = sides.map((s) => coordinatesOf(sandwich(half, s.operator)));
  let point = x;
  let evaluation = current;
  let taken = 0;
  let centred = false;
  const shape = ComplexMatrix.identity(n);
  for (let step = 0; step < HESSIAN_FREE_STEPS; step++) {
    const terms = barrierTerms(shape, sides, point);
    if (terms === null) break;
    const { inverse, inverseHalf, slacks } = terms;
    const full = coordinatesOf(sandwich(half, evaluation.gradient));
    const barrierRow = coordinatesOf(inverse);
    for (let i = 0; i < full.length; i++) full[i] -= weight * barrierRow[i];
    sides.forEach((s, q) => {
      for (let i = 0; i < full.length; i++) full[i] -= (weight * s.sign * sideRows[q][i]) / slacks[q];
    });
    const gradient = project(full);
    if (!gradient.every(Number.isFinite)) break;
    const here = evaluation;
    const from = point;
    const product = (v: Float64Array): Float64Array | null => {
      const length = Math.sqrt(dot(v, v));
      const inner = innerOf(v);
      const difference = gradientChange(from, here, sandwich(half, inner), DIFFERENCE_STEP / length, evaluate);
      if (!difference) return null;
      const out = coordinatesOf(sandwich(half, difference));
      for (let i = 0; i < out.length; i++) out[i] *= length / DIFFERENCE_STEP;
      const barrier = step === 0 ? v : coordinatesOf(sandwich(inverse, inner));
      for (let i = 0; i < out.length; i++) out[i] += weight * barrier[i];
      sides.forEach((_, q) => {
        const along = (weight * dot(sideRows[q], v)) / slacks[q] ** 2;
        for (let i = 0; i < out.length; i++) out[i] += along * sideRows[q][i];
      });
      return project(out);
    };
    // Conjugate gradients from d = 0 on (H)·d = −g in the tangent space.
    const d = new Float64Array(gradient.length);
    const residual = Float64Array.from(gradient, (g) => -g);
    const direction = Float64Array.from(residual);
    let rr = dot(residual, residual);
    const stop = CG_TOLERANCE * Math.sqrt(rr);
    for (let it = 0; it < CG_ITERATIONS && Math.sqrt(rr) > stop; it++) {
      const hp = product(direction);
      if (!hp || !hp.every(Number.isFinite)) break;
      const curvature = dot(direction, hp);
      if (!(curvature > 0)) break;
      const alpha = rr / curvature;
      for (let i = 0; i < d.length; i++) {
        d[i] += alpha * direction[i];
        residual[i] -= alpha * hp[i];
      }
      const next = dot(residual, residual);
      for (let i = 0; i < d.length; i++) direction[i] = residual[i] + (next / rr) * direction[i];
      rr = next;
    }
    const decrement = -dot(gradient, d);
    if (!(decrement > 0)) break;
    const inner = innerOf(d);
    const accepted = barrierLineStep({ point, evaluation, inner, decrement, weight, sides, slacks, inverseHalf, half, evaluate });
    if (accepted === null) break;
    point = accepted.point;
    evaluation = accepted.evaluation;
    addScaledInPlace(shape, inner, accepted.t);
    taken++;
    centred = decrement <= CENTRED * weight;
    if (centred) break;
  }
  return { point, evaluation, taken, centred };
}

/** Rows whose singular value is below this share of the largest are dependent (the rows are scaled to unit length). */
const DEPENDENT_ROW = 1e-10;

/**
 * An orthonormal basis of the vectors orthogonal to every row, from one Householder QR of the rows as columns
 * (padded to a square matrix, so that the orthogonal factor is complete): its columns past the rows' count, plus
 * the directions dependent rows leave among the first ones (left null vectors of the triangular factor).
 */
export function nullSpace(rows: readonly Float64Array[], m: number): Float64Array[] {
  const r = rows.length;
  const padded = new Matrix(m, m);
  rows.forEach((row, j) => {
    const length = Math.sqrt(dot(row, row)) || 1;
    for (let i = 0; i < m; i++) padded.set(i, j, row[i] / length);
  });
  const qr = new QrDecomposition(padded);
  const q = qr.orthogonalMatrix;
  const basis: Float64Array[] = [];
  for (let j = r; j < m; j++) basis.push(Float64Array.from(q.getColumn(j)));
  const triangular = qr.upperTriangularMatrix.subMatrix(0, r - 1, 0, r - 1);
  const svd = new SingularValueDecomposition(triangular, { computeRightSingularVectors: false });
  const largest = svd.diagonal[0];
  const left = svd.leftSingularVectors;
  svd.diagonal.forEach((sigma, a) => {
    if (sigma > DEPENDENT_ROW * largest) return;
    const v = new Float64Array(m);
    for (let j = 0; j < r; j++) {
      const w = left.get(j, a);
      for (let i = 0; i < m; i++) v[i] += w * q.get(i, j);
    }
    basis.push(v);
  });
  return basis;
}
