import { CholeskyDecomposition, Matrix, pseudoInverse } from '../linear-algebra/ml-matrix.js';
import {
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  hermitianPart,
  largestEntry,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  traceProductReal,
} from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import type { LinearConstraint } from '../problem/model.js';
import {
  dampedNewton,
  DEFAULT_FACE_NEWTON,
  heldTarget,
  meetsHeldRows,
  rowSpaceAndTangent,
  spectralGap,
  type FaceEvaluation,
  type FaceNewtonOptions,
  type FaceNewtonStep,
  type HeldSide,
} from './face-newton.js';

/**
 * Newton steps on the manifold of rank-r states (docs/convergence.md, "Newton steps that rotate the support").
 * Face-Newton keeps the iterate's large eigenspace fixed; at a boundary optimum whose support differs from it,
 * only Frank–Wolfe could rotate the support. Here, in the iterate's eigenbasis W = [W_r, W_⊥] with large
 * eigenvalues Λ, the chart
 *
 *     ρ(K, B) = W·[S; B†]·S⁻¹·[S, B]·W† + ε·1,   S = Λ + K ≻ 0,
 *
 * covers every rank-r state near the squeezed iterate (the lower-right block B†S⁻¹B is the Schur complement
 * that keeps the rank at r; ε·1 keeps F finite). K moves inside the support, B rotates it. The held rows (trace,
 * equalities, held interval sides) are nonlinear in (K, B); a step is taken in their linearised null space and
 * restored onto them by Gauss–Newton corrections in the row space, so the objective is minimised over the
 * rank-r part of the face (a smooth manifold) by damped Newton steps with a Hessian from central differences of
 * the reduced gradient. As with face-Newton the step is only a proposal: the oracle still certifies every bound.
 */

/** Gauss–Newton corrections tried when restoring the held rows after a tangent step. */
const RESTORATION_STEPS = 10;
/** Held rows count as met by the restoration when within this relative distance (meetsHeldRows then confirms). */
const RESTORED = 1e-14;
/** Charts (each with its Hessian) per step: a new one after the rank drops. */
const ROUNDS = 3;
/** Interval sides newly held within one chart (each costs a projection of the Hessian, no evaluations). */
const MAX_ABSORBED = 12;
/** A Newton step of which less than this share is feasible is replaced by one within a trust radius… */
const SHORTEST_SHARE = 1e-3;
/** …of this share of the smallest eigenvalue kept in the support. */
const TRUST_SHARE = 0.5;
/** Restoration corrections that reuse the first Jacobian before each one recomputes it. */
const CHORD_STEPS = 3;
/** Bisections of a Newton step that crosses a boundary. */
const BISECTIONS = 12;
/** The support block S must keep its eigenvalues above this share of the iterate's smallest kept eigenvalue. */
const SUPPORT_FLOOR = 1e-3;

interface HeldRow {
  operator: ComplexMatrix;
  target: number;
  /** The operator in the iterate's eigenbasis (W†·Γ·W). */
  rotated: ComplexMatrix;
}

interface ChartPoint {
  z: Float64Array;
  /** G = [S; B†]·S⁻¹ (n × r), which every derivative of the chart uses. */
  g: ComplexMatrix;
  state: ComplexMatrix;
}

/**
 * The chart ρ(z) around the iterate and its derivative. Coordinates z: r² for K (an orthonormal Hermitian
 * basis), then Re and Im of each entry of B scaled by 1/√2, so that the coordinates are orthonormal in the
 * Hilbert–Schmidt metric at z = 0.
 */
export class RankChart {
  readonly r: number;
  readonly s: number;
  readonly size: number;

  constructor(
    readonly frame: ComplexMatrix,
    private readonly large: Float64Array,
    private readonly squeeze: number,
    private readonly supportFloor: number,
  ) {
    this.r = large.length;
    this.s = frame.rows - this.r;
    this.size = this.r * this.r + 2 * this.r * this.s;
  }

  /** ρ(z), or null when S is no longer safely positive definite (the rank would drop). */
  point(z: Float64Array): ChartPoint | null {
    const { r, s } = this;
    const n = r + s;
    const support = ComplexMatrix.diagonal(this.large);
    addHermitianCoordinates(support, z);
    const { values, vectors } = eigh(support);
    if (!(values[0] > this.supportFloor)) return null;
    // S⁻¹ = V·diag(1/σ)·V†.
    const scaled = vectors.clone();
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < r; j++) {
        scaled.re[i * r + j] /= values[j];
        scaled.im[i * r + j] /= values[j];
      }
    }
    const inverse = multiplyAdjointRight(scaled, vectors);
    // M = [S; B†] (n × r); B†[b][a] = conj(B[a][b]).
    const m = new ComplexMatrix(n, r);
    m.re.set(support.re, 0);
    m.im.set(support.im, 0);
    for (let a = 0; a < r; a++) {
      for (let b = 0; b < s; b++) {
        const at = r * r + 2 * (a * s + b);
        m.re[(r + b) * r + a] = z[at] * Math.SQRT1_2;
        m.im[(r + b) * r + a] = -z[at + 1] * Math.SQRT1_2;
      }
    }
    const g = multiply(m, inverse);
    // Exactly Hermitian (the two triangles are rounded differently).
    const inFrame = hermitianPart(multiplyAdjointRight(m, g));
    const state = conjugate(this.frame, inFrame);
    for (let i = 0; i < n; i++) state.re[i * n + i] += this.squeeze;
    return { z, g, state };
  }

  /**
   * ∂/∂z of Re Tr(A·ρ(z)) for Hermitian A given in the frame (A_W = W†·A·W): with dρ_W = dM·G† + G·dM† − G·dS·G†,
   * the K part is the Hermitian P = E†A_W·G + (E†A_W·G)† − G†A_W·G (E = first r columns of 1), the B part
   * 2·Re Tr(dB·F†A_W·G) (F = last s columns of 1).
   */
  pairing(rotated: ComplexMatrix, at: ChartPoint): Float64Array {
    const { r, s } = this;
    const ag = multiply(rotated, at.g);
    const gag = multiplyAdjointLeft(at.g, ag);
    const out = new Float64Array(this.size);
    const p = new ComplexMatrix(r, r);
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < r; j++) {
        // (E†A G)_{ij} = ag[i][j]; its adjoint's (i, j) entry is conj(ag[j][i]).
        p.re[i * r + j] = ag.re[i * r + j] + ag.re[j * r + i] - gag.re[i * r + j];
        p.im[i * r + j] = ag.im[i * r + j] - ag.im[j * r + i] - gag.im[i * r + j];
      }
    }
    hermitianCoordinates(p, out);
    for (let a = 0; a < r; a++) {
      for (let b = 0; b < s; b++) {
        // C = F†A G: C[b][a] = ag[r + b][a].
        const re = ag.re[(r + b) * r + a];
        const im = ag.im[(r + b) * r + a];
        const at = r * r + 2 * (a * s + b);
        out[at] = Math.SQRT2 * re;
        out[at + 1] = -Math.SQRT2 * im;
      }
    }
    return out;
  }
}

/**
 * Coordinates of a Hermitian r×r matrix in the orthonormal basis of hermitianBasis (face-newton.ts), in its order:
 * E_ii, then for j > i (E_ij + E_ji)/√2 and i(E_ij − E_ji)/√2 — i.e. p_ii, √2·Re p_ij, −√2·Im p_ij.
 */
export function hermitianCoordinates(p: ComplexMatrix, out: Float64Array): void {
  const r = p.rows;
  let at = 0;
  for (let i = 0; i < r; i++) {
    out[at++] = p.re[i * r + i];
    for (let j = i + 1; j < r; j++) {
      // The mean of the two triangles (p is Hermitian up to rounding).
      out[at++] = Math.SQRT1_2 * (p.re[i * r + j] + p.re[j * r + i]);
      out[at++] = -Math.SQRT1_2 * (p.im[i * r + j] - p.im[j * r + i]);
    }
  }
}

/** target += Σ z_b·basis_b over the first r² coordinates (the inverse of hermitianCoordinates). */
export function addHermitianCoordinates(target: ComplexMatrix, z: ArrayLike<number>): void {
  const r = target.rows;
  let at = 0;
  for (let i = 0; i < r; i++) {
    target.re[i * r + i] += z[at++];
    for (let j = i + 1; j < r; j++) {
      const re = Math.SQRT1_2 * z[at++];
      const im = Math.SQRT1_2 * z[at++];
      target.re[i * r + j] += re;
      target.re[j * r + i] += re;
      target.im[i * r + j] -= im;
      target.im[j * r + i] += im;
    }
  }
}

/** Trace 1, every equality and every held interval side, with their targets. */
function heldRows(constraints: readonly LinearConstraint[], held: readonly HeldSide[], frame: ComplexMatrix): HeldRow[] {
  const n = frame.rows;
  const identity = ComplexMatrix.identity(n);
  const rows: HeldRow[] = [{ operator: identity, target: 1, rotated: identity }];
  constraints.forEach((c, i) => {
    const target = heldTarget(c, held[i]);
    if (target === null) return;
    rows.push({ operator: c.operator, target, rotated: conjugateAdjoint(frame, c.operator) });
  });
  return rows;
}

export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** What stopped a round of Newton steps short of a full step: an interval side not yet held, or the rank. */
type Blocked = { index: number; side: 'lower' | 'upper' } | 'support' | 'restoration';

/**
 * Damped Newton steps of F on the rank-r states of the face (r from the iterate's spectral gap, see
 * FaceNewtonOptions.gapRatio), the held rows met exactly. A step that would leave an interval or lower the rank
 * stops at that boundary (bisection on the step length); the side is then held in the same chart, and a lower
 * rank starts the next round, whose eigendecomposition drops the vanishing eigenvalue from the support (an
 * active-set strategy; Nocedal & Wright, Numerical Optimization, 2nd ed., §16.5; from memory). Returns the end
 * point and the sides held there; null when the iterate has no spectral gap, the manifold has no room or too many
 * tangent directions for a formed Hessian, or no step ends below F(x).
 */
export function rankManifoldStep<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  constraints: readonly LinearConstraint[],
  held: readonly HeldSide[],
  evaluate: (state: ComplexMatrix) => E | null,
  options: FaceNewtonOptions = DEFAULT_FACE_NEWTON,
): (FaceNewtonStep<E> & { holding: readonly HeldSide[] }) | null {
  let holding: readonly HeldSide[] = held;
  let best: FaceNewtonStep<E> | null = null;
  for (let round = 0; round < ROUNDS; round++) {
    const from: { point: ComplexMatrix; evaluation: E } = best ?? { point: x, evaluation: current };
    const outcome: RoundOutcome<E> = manifoldRound(from.point, from.evaluation, constraints, holding, evaluate, options);
    if (!outcome.step) break;
    best = outcome.step;
    holding = outcome.holding;
    if (outcome.blocked === null || outcome.blocked === 'restoration') break;
  }
  return best !== null && best.evaluation.value < current.value ? { ...best, holding } : null;
}

interface RoundOutcome<E extends FaceEvaluation> {
  step: FaceNewtonStep<E> | null;
  /** What stopped the last step at a boundary (null: none did). */
  blocked: Blocked | null;
  /** The held sides at the end (sides met within the round are added). */
  holding: readonly HeldSide[];
}

/** One chart and Hessian and the Newton steps taken with them. */
function manifoldRound<E extends FaceEvaluation>(
  x: ComplexMatrix,
  current: E,
  constraints: readonly LinearConstraint[],
  held: readonly HeldSide[],
  evaluate: (state: ComplexMatrix) => E | null,
  options: FaceNewtonOptions,
): RoundOutcome<E> {
  const none = { step: null, blocked: null, holding: held };
  const { values, vectors } = eigh(x);
  const n = values.length;
  const first = spectralGap(values, options);
  if (first === 0) return none;
  const r = n - first;
  // The frame: the large eigenvectors first, then the small ones.
  const frame = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const from = j < r ? first + j : j - r;
      frame.re[i * n + j] = vectors.re[i * n + from];
      frame.im[i * n + j] = vectors.im[i * n + from];
    }
  }
  const large = values.slice(first);
  const chart = new RankChart(frame, large, options.squeezeLevel, SUPPORT_FLOOR * large[0]);
  const holding = [...held];
  const origin = chart.point(new Float64Array(chart.size));
  if (!origin) return none;
  let rows: HeldRow[] = [];
  let scales: number[] = [];
  let tangent: Float64Array[] = [];
  let normal: Float64Array[] = [];
  let k = 0;
  const jacobian = (at: ChartPoint) => rows.map((row) => chart.pairing(row.rotated, at));
  // (J·R)⁺ as q rows of length m: J·R has full column rank (R spans the held rows' independent directions), so
  // (J·R)⁺ = ((J·R)ᵀ·J·R)⁻¹·(J·R)ᵀ, from one Cholesky factor of the small Gram matrix.
  const rowSpaceInverse = (j: readonly Float64Array[]): Float64Array[] => {
    const inRowSpace = new Matrix(j.map((row) => normal.map((column) => dot(row, column))));
    const gram = new CholeskyDecomposition(inRowSpace.transpose().mmul(inRowSpace));
    const inverse = gram.isPositiveDefinite() ? gram.solve(inRowSpace.transpose()) : pseudoInverse(inRowSpace);
    return normal.map((_, a) => Float64Array.from(inverse.getRow(a)));
  };

  // z = T·t + R·u, with u chosen so that the held rows are met at ρ(z) (Gauss–Newton in the row space).
  type Restored = (ChartPoint & { u: Float64Array }) | 'support' | 'restoration';
  const restore = (t: ArrayLike<number>, u0: Float64Array): Restored => {
    const u: Float64Array = Float64Array.from(u0);
    let chord: Float64Array[] | undefined;
    for (let step = 0; ; step++) {
      const z = new Float64Array(chart.size);
      tangent.forEach((column, j) => {
        for (let i = 0; i < chart.size; i++) z[i] += column[i] * t[j];
      });
      normal.forEach((column, j) => {
        for (let i = 0; i < chart.size; i++) z[i] += column[i] * u[j];
      });
      const at = chart.point(z);
      if (!at) return 'support';
      const residual = rows.map((row) => row.target - traceProductReal(row.operator, at.state));
      if (residual.every((v, i) => Math.abs(v) <= RESTORED * scales[i])) return { ...at, u };
      if (step === RESTORATION_STEPS) return meetsHeldRows(constraints, holding, at.state) ? { ...at, u } : 'restoration';
      // The Jacobian of the first point serves the first corrections (a chord method: the steps are short); a
      // restoration that has not converged by then refreshes it every time (Gauss–Newton).
      if (chord === undefined || step >= CHORD_STEPS) chord = rowSpaceInverse(jacobian(at));
      for (let j = 0; j < u.length; j++) u[j] += dot(chord[j], residual);
    }
  };
  // ∇ of t ↦ f(ρ(z(t))) from f's gradient g in the chart: dz/dt = T − R·(J·R)⁺·J·T (implicit function theorem
  // on the held rows). With J the held rows' Jacobian and w = ((J·R)⁺)ᵀ·Rᵀ·g: ∇_t = Tᵀ·(g − Jᵀ·w).
  const reduce = (at: ChartPoint, g: Float64Array): Float64Array => {
    const j = jacobian(at);
    const inverse = rowSpaceInverse(j);
    const w = new Float64Array(rows.length);
    normal.forEach((column, a) => {
      const along = dot(column, g);
      for (let i = 0; i < rows.length; i++) w[i] += inverse[a][i] * along;
    });
    j.forEach((row, i) => {
      for (let c = 0; c < chart.size; c++) g[c] -= row[c] * w[i];
    });
    return Float64Array.from(tangent, (column) => dot(column, g));
  };
  const reducedGradient = (at: ChartPoint, e: E) => reduce(at, chart.pairing(conjugateAdjoint(frame, e.gradient), at));

  // The held rows, their tangent space at the origin, and the squeezed iterate restored onto them; a side the
  // squeeze pushes out of its interval is held too (the squeeze moves ρ by the small eigenvalues, which ±1e-3
  // intervals do not always absorb).
  let start: ChartPoint & { u: Float64Array };
  for (let attempt = 0; ; attempt++) {
    rows = heldRows(constraints, holding, frame);
    scales = rows.map((row) => 1 + largestEntry(row.operator));
    if (chart.size - rows.length > options.maxTangentDimension) return none;
    ({ tangent, normal } = rowSpaceAndTangent(jacobian(origin), chart.size));
    k = tangent.length;
    if (k === 0 || k > options.maxTangentDimension) return none;
    const restored = restore(new Float64Array(k), new Float64Array(normal.length));
    if (typeof restored === 'string') return none;
    const crossed = crossedSide(constraints, holding, restored.state);
    if (crossed === null) {
      start = restored;
      break;
    }
    if (typeof crossed === 'string' || attempt === MAX_ABSORBED) return none;
    holding[crossed.index] = crossed.side;
  }
  const atStart = evaluate(start.state);
  if (!atStart) return none;

  // Forward differences of the reduced gradient (the t coordinates are orthonormal at the origin): one restored
  // point and one evaluation per tangent direction; the O(h) error only slows Newton's last digits.
  const h = Math.min(1e-5, 0.1 * large[0]);
  const atOrigin = reducedGradient(start, atStart);
  const hessian = new Matrix(k, k);
  for (let j = 0; j < k; j++) {
    const t = new Float64Array(k);
    t[j] = h;
    const at = restore(t, start.u);
    const e = typeof at === 'string' ? null : evaluate(at.state);
    if (typeof at === 'string' || !e) return none;
    const column = reducedGradient(at, e);
    for (let i = 0; i < k; i++) hessian.set(i, j, (column[i] - atOrigin[i]) / h);
  }
  const symmetric = new Matrix(k, k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) symmetric.set(i, j, (hessian.get(i, j) + hessian.get(j, i)) / 2);
  let reduced = symmetric;
  let newton = dampedNewton(reduced);
  if (newton === null) return none;

  // A candidate t: restored and inside every interval, or what it crosses.
  const tryStep = (t: Float64Array, u: Float64Array): (ChartPoint & { u: Float64Array }) | Blocked => {
    const at = restore(t, u);
    if (typeof at === 'string') return at;
    const crossed = crossedSide(constraints, holding, at.state);
    return crossed ?? at;
  };
  let t: Float64Array = new Float64Array(k);
  let u: Float64Array = start.u;
  let here: { at: ChartPoint; e: E } = { at: start, e: atStart };
  let best: FaceNewtonStep<E> | null = null;
  // Each step must lower F from the chart's start; the squeeze may have raised it above F(x), which only the
  // attempt's end point must beat (rankManifoldStep).
  let reference = atStart.value;
  for (let taken = 0, absorbed = 0; taken < options.stepsInARow + absorbed && newton !== null; taken++) {
    const g = reducedGradient(here.at, here.e);
    // The longest feasible share of a step (bisection when the full step crosses a boundary).
    const feasibleShare = (coefficients: Float64Array): { longest: number; blocked: Blocked | null } => {
      const full = tryStep(Float64Array.from(t, (v, i) => v + coefficients[i]), u);
      if (!isBlocked(full)) return { longest: 1, blocked: null };
      let blocked: Blocked = full;
      let low = 0;
      let high = 1;
      for (let i = 0; i < BISECTIONS; i++) {
        const mid = 0.5 * (low + high);
        const probe = tryStep(Float64Array.from(t, (v, j) => v + mid * coefficients[j]), u);
        if (isBlocked(probe)) (high = mid), (blocked = probe);
        else low = mid;
      }
      return { longest: low, blocked };
    };
    let step: { coefficients: Float64Array; decrement: number } = newton.solve(g);
    if (!(step.decrement > 0)) break;
    let { longest, blocked } = feasibleShare(step.coefficients);
    // Near-zero curvature along directions that end on an interval or the cone can make the Newton step so long
    // that hardly any of it is feasible; then a Levenberg shift |g|/radius keeps it within a trust radius of half
    // the smallest support eigenvalue (for H ⪰ 0, ‖(H + μ)⁻¹g‖ ≤ |g|/μ), the room S has before the rank drops
    // (Nocedal & Wright, Numerical Optimization, 2nd ed., ch. 4; from memory).
    if (longest < SHORTEST_SHARE) {
      const radius = TRUST_SHARE * large[0];
      const shifted = reduced.clone();
      const shift = Math.hypot(...g) / radius;
      for (let i = 0; i < k; i++) shifted.set(i, i, shifted.get(i, i) + shift);
      const trusted = dampedNewton(shifted)?.solve(g);
      if (trusted && trusted.decrement > 0) {
        step = trusted;
        ({ longest, blocked } = feasibleShare(step.coefficients));
      }
    }
    const along = (scale: number) => Float64Array.from(t, (v, i) => v + scale * step.coefficients[i]);
    // …then halved until F decreases.
    let moved: { t: Float64Array; at: ChartPoint & { u: Float64Array }; e: E; scale: number } | null = null;
    for (let scale = longest, tries = 0; scale > 0 && tries <= options.backtracks && moved === null; tries++, scale /= 2) {
      const candidate = along(scale);
      const at = tryStep(candidate, u);
      if (isBlocked(at)) continue;
      const e = evaluate(at.state);
      if (e && e.value < reference) moved = { t: candidate, at, e, scale };
    }
    if (moved === null) break;
    ({ t } = moved);
    u = moved.at.u;
    here = { at: moved.at, e: moved.e };
    reference = moved.e.value;
    best = { point: moved.at.state, evaluation: moved.e, decrement: step.decrement };
    if (blocked !== null && moved.scale === longest) {
      // Stopped at a boundary. A restoration that failed further on only shortened the step: go on from here.
      if (blocked === 'restoration') continue;
      // A lower rank needs a new chart (the next round).
      if (blocked === 'support' || k === 1 || absorbed === MAX_ABSORBED) return { step: best, blocked, holding };
      // An interval side: hold it from here on, in the same chart. Its reduced gradient q (unit) splits the
      // tangent coordinates into q (now a row-space direction) and q's complement Q; the Hessian becomes QᵀHQ.
      const side = constraints[blocked.index];
      holding[blocked.index] = blocked.side;
      const operator = side.operator;
      rows.push({ operator, target: blocked.side === 'lower' ? side.lower : side.upper, rotated: conjugateAdjoint(frame, operator) });
      scales.push(1 + largestEntry(operator));
      const q = reduce(here.at, chart.pairing(rows[rows.length - 1].rotated, here.at));
      const length = Math.hypot(...q);
      if (!(length > 0)) return { step: best, blocked, holding };
      for (let i = 0; i < k; i++) q[i] /= length;
      const complement = rowSpaceAndTangent([q], k).tangent;
      const inChart = (coefficients: Float64Array) => {
        const column = new Float64Array(chart.size);
        tangent.forEach((c, j) => {
          for (let i = 0; i < chart.size; i++) column[i] += c[i] * coefficients[j];
        });
        return column;
      };
      normal = [...normal, inChart(q)];
      u = Float64Array.from([...u, dot(q, t)]);
      tangent = complement.map(inChart);
      t = Float64Array.from(complement, (c) => dot(c, t));
      const projected = new Matrix(complement.length, complement.length);
      complement.forEach((a, i) => {
        for (let j = 0; j <= i; j++) {
          const v = quadratic(reduced, a, complement[j]);
          projected.set(i, j, v);
          projected.set(j, i, v);
        }
      });
      k = complement.length;
      reduced = projected;
      newton = dampedNewton(reduced);
      absorbed++;
      continue;
    }
    if (step.decrement <= options.stopDecrement) break;
  }
  return { step: best, blocked: null, holding };
}

/** aᵀ·H·b. */
function quadratic(h: Matrix, a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) s += a[i] * h.get(i, j) * b[j];
  return s;
}

function isBlocked<T extends object>(value: T | Blocked): value is Blocked {
  return typeof value === 'string' || 'side' in value;
}

/** The interval side (not held) the state violates most, relative to the interval's width; null if none. */
function crossedSide(constraints: readonly LinearConstraint[], held: readonly HeldSide[], state: ComplexMatrix): Blocked | null {
  let worst: Blocked | null = null;
  let largest = 0;
  constraints.forEach((c, index) => {
    if (c.lower === c.upper || held[index] !== null) return;
    const v = traceProductReal(c.operator, state);
    const slack = 1e-14 * (1 + Math.abs(v));
    const width = c.upper - c.lower;
    const below = (c.lower - slack - v) / width;
    const above = (v - c.upper - slack) / width;
    if (below > largest) (largest = below), (worst = { index, side: 'lower' });
    if (above > largest) (largest = above), (worst = { index, side: 'upper' });
  });
  return worst;
}
