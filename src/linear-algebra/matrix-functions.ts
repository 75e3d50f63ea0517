// Functions of Hermitian matrices through their eigendecomposition, and their Fréchet derivatives
// (Daleckii–Krein formula).
import { adjoint, ComplexMatrix, multiply, multiplyAdjointLeft, multiplyAdjointRight } from './complex-matrix.js';
import { eigh, type HermitianEigen } from './eigen.js';
import { pollAtOrder } from './interruption.js';
import { UNIT_ROUNDOFF } from './rounding.js';
import { zeroEigenvalueTolerance } from './support.js';

/**
 * Relative eigenvalue gap below which a divided difference (f(x) − f(y))/(x − y) is replaced by f'
 * at the midpoint. The quotient loses about u·|f|/(|x−y|·|f'|) to cancellation while the midpoint
 * derivative is off by about |f'''|·(x−y)²/24, so the crossover sits near u^{1/3} ≈ 5e-6 relative;
 * both errors are then ~1e-11 relative for powers and logarithms.
 */
export const DIVIDED_DIFFERENCE_RELATIVE_GAP = Math.cbrt(UNIT_ROUNDOFF);

/** A scalar function with its derivative and, optionally, a cancellation-free difference f(x) − f(y). */
export interface ScalarFunction {
  value: (x: number) => number;
  derivative: (x: number) => number;
  /** f(x) − f(y) computed without cancellation for nearby x, y (used for divided differences). */
  difference?: (x: number, y: number) => number;
}

/** f(A) = V·f(Λ)·V† for A = V·Λ·V†; the result is exactly Hermitian (lower triangle mirrored). */
export function spectralFunction(eig: HermitianEigen, f: (x: number) => number): ComplexMatrix {
  const rows = eig.vectors.rows;
  const out = new ComplexMatrix(rows, rows);
  spectralFunctionInto(out, 0, eig, f);
  return out;
}

/**
 * Writes f(A) into the square block of `out` at (offset, offset), leaving the rest of `out` as it is: a
 * block-diagonal ⊕_k f(A_k) is assembled in place instead of copied from one matrix per block.
 */
export function spectralFunctionInto(out: ComplexMatrix, offset: number, eig: HermitianEigen, f: (x: number) => number): void {
  const { values, vectors } = eig;
  const n = values.length;
  if (vectors.cols !== n) throw new RangeError(`spectralFunction: ${n} eigenvalues but ${vectors.cols} eigenvectors`);
  if (offset + vectors.rows > Math.min(out.rows, out.cols)) throw new RangeError('spectralFunctionInto: block outside the output');
  const fv = new Float64Array(n);
  for (let k = 0; k < n; k++) fv[k] = f(values[k]);
  // f(A) = (V·diag(f))·V†, Hermitian, so only its lower triangle is computed.
  lowerTimesAdjointInto(out, offset, vectors, vectors, fv);
}

/**
 * The first divided differences Γ_ij = (f(λ_i) − f(λ_j))/(λ_i − λ_j), n×n row-major, symmetric.
 * Γ_ii = f'(λ_i). For |λ_i − λ_j| ≤ DIVIDED_DIFFERENCE_RELATIVE_GAP·max(|λ_i|, |λ_j|) the quotient
 * would cancel, so f' at the midpoint is used (error ~ |f'''|·Δ²/24). When a cancellation-free
 * `difference(x, y) = f(x) − f(y)` is supplied the quotient is used for every distinct pair instead.
 */
export function dividedDifferences(
  values: Float64Array,
  f: (x: number) => number,
  fPrime: (x: number) => number,
  difference?: (x: number, y: number) => number,
): Float64Array {
  const n = values.length;
  const gamma = new Float64Array(n * n);
  const fv = new Float64Array(n);
  for (let i = 0; i < n; i++) fv[i] = f(values[i]);
  for (let i = 0; i < n; i++) {
    const x = values[i];
    gamma[i * n + i] = fPrime(x);
    for (let j = 0; j < i; j++) {
      const y = values[j];
      const gap = x - y;
      let g: number;
      if (gap === 0) g = fPrime(x);
      else if (difference !== undefined) g = difference(x, y) / gap;
      else if (Math.abs(gap) <= DIVIDED_DIFFERENCE_RELATIVE_GAP * Math.max(Math.abs(x), Math.abs(y))) g = fPrime(0.5 * (x + y));
      else g = (fv[i] - fv[j]) / gap;
      gamma[i * n + j] = g;
      gamma[j * n + i] = g;
    }
  }
  return gamma;
}

/**
 * Daleckii–Krein: the Fréchet derivative Df(A)[H] = V·(Γ ∘ (V†·H·V))·V† for A = V·Λ·V†,
 * Γ = dividedDifferences(Λ, f, f'). Works for any square H; an exactly Hermitian H takes a faster
 * path that forms only the lower triangles of the Hermitian intermediates and gives an exactly
 * Hermitian result.
 */
export function frechetDerivative(eig: HermitianEigen, gamma: Float64Array, h: ComplexMatrix): ComplexMatrix {
  const n = eig.values.length;
  const v = eig.vectors;
  if (v.rows !== n || v.cols !== n) throw new RangeError(`frechetDerivative: eigenvectors are ${v.rows}x${v.cols}, expected ${n}x${n}`);
  if (h.rows !== n || h.cols !== n) throw new RangeError(`frechetDerivative: direction is ${h.rows}x${h.cols}, expected ${n}x${n}`);
  if (gamma.length !== n * n) throw new RangeError(`frechetDerivative: ${gamma.length} divided differences, expected ${n * n}`);
  if (!isExactlyHermitian(h)) {
    const inner = multiply(multiplyAdjointLeft(v, h), v);
    for (let k = 0; k < n * n; k++) {
      inner.re[k] *= gamma[k];
      inner.im[k] *= gamma[k];
    }
    return multiplyAdjointRight(multiply(v, inner), v);
  }
  // W = V†, S = W·H = (H·V)†, T = Γ ∘ (W·S†) (Hermitian: lower triangle, mirrored), P = V·T, result P·V†.
  const w = adjoint(v);
  const s = multiply(w, h);
  const t = lowerTimesAdjoint(w, s);
  for (let k = 0; k < n * n; k++) {
    t.re[k] *= gamma[k];
    t.im[k] *= gamma[k];
  }
  return lowerTimesAdjoint(multiply(v, t), v);
}

/** H equals its adjoint entry by entry (no tolerance: only then is the Hermitian fast path exact). */
function isExactlyHermitian(h: ComplexMatrix): boolean {
  const n = h.rows;
  for (let i = 0; i < n; i++) {
    if (h.im[i * n + i] !== 0) return false;
    for (let j = 0; j < i; j++) {
      if (h.re[i * n + j] !== h.re[j * n + i] || h.im[i * n + j] !== -h.im[j * n + i]) return false;
    }
  }
  return true;
}

/** X·Y† for a product known to be Hermitian: lower triangle by row dot products, then mirrored. */
function lowerTimesAdjoint(x: ComplexMatrix, y: ComplexMatrix): ComplexMatrix {
  const out = new ComplexMatrix(x.rows, x.rows);
  lowerTimesAdjointInto(out, 0, x, y);
  return out;
}

/** One row of X (times diag(columnScale)) while its dot products are formed; grown on demand, never shared by two calls. */
let rowRe = new Float64Array(0);
let rowIm = new Float64Array(0);

/**
 * lowerTimesAdjoint written into the block of `out` at (offset, offset); with `columnScale` it forms
 * (X·diag(columnScale))·Y†, scaling each row of X once into a reused buffer (the products are those of the scaled
 * matrix, so the result is bit-identical to forming it first). No callback runs while the buffer is in use.
 */
function lowerTimesAdjointInto(out: ComplexMatrix, offset: number, x: ComplexMatrix, y: ComplexMatrix, columnScale?: Float64Array): void {
  const n = x.rows;
  const p = x.cols;
  pollAtOrder(Math.max(n, p));
  const stride = out.cols;
  const or = out.re;
  const oi = out.im;
  const yr = y.re;
  const yi = y.im;
  if (columnScale !== undefined && rowRe.length < p) {
    rowRe = new Float64Array(p);
    rowIm = new Float64Array(p);
  }
  // Unscaled, the rows are read where they are.
  const xr = columnScale === undefined ? x.re : rowRe;
  const xi = columnScale === undefined ? x.im : rowIm;
  for (let i = 0; i < n; i++) {
    let ri = i * p;
    if (columnScale !== undefined) {
      for (let k = 0; k < p; k++) {
        xr[k] = x.re[ri + k] * columnScale[k];
        xi[k] = x.im[ri + k] * columnScale[k];
      }
      ri = 0;
    }
    const row = (offset + i) * stride + offset;
    // Two rows of Y per pass share each load of row i of X.
    let j = 0;
    for (; j + 1 <= i; j += 2) {
      const r0 = j * p;
      const r1 = r0 + p;
      let s0r = 0;
      let s0i = 0;
      let s1r = 0;
      let s1i = 0;
      for (let k = 0; k < p; k++) {
        const ar = xr[ri + k];
        const ai = xi[ri + k];
        const b0r = yr[r0 + k];
        const b0i = yi[r0 + k];
        const b1r = yr[r1 + k];
        const b1i = yi[r1 + k];
        s0r += ar * b0r + ai * b0i;
        s0i += ai * b0r - ar * b0i;
        s1r += ar * b1r + ai * b1i;
        s1i += ai * b1r - ar * b1i;
      }
      or[row + j] = s0r;
      oi[row + j] = s0i;
      or[(offset + j) * stride + offset + i] = s0r;
      oi[(offset + j) * stride + offset + i] = -s0i;
      or[row + j + 1] = s1r;
      oi[row + j + 1] = s1i;
      or[(offset + j + 1) * stride + offset + i] = s1r;
      oi[(offset + j + 1) * stride + offset + i] = -s1i;
    }
    for (; j <= i; j++) {
      const rj = j * p;
      let sr = 0;
      let si = 0;
      for (let k = 0; k < p; k++) {
        const ar = xr[ri + k];
        const ai = xi[ri + k];
        const br = yr[rj + k];
        const bi = yi[rj + k];
        sr += ar * br + ai * bi;
        si += ai * br - ar * bi;
      }
      or[row + j] = sr;
      oi[row + j] = si;
      or[(offset + j) * stride + offset + i] = sr;
      oi[(offset + j) * stride + offset + i] = -si;
    }
    oi[row + i] = 0;
  }
}

/**
 * Relative separation above which f(x) − f(y) is taken directly: there is no cancellation to avoid,
 * and the log1p/expm1 forms could overflow for extreme ratios.
 */
const DIRECT_DIFFERENCE_RELATIVE_GAP = 0.5;

/** True when x and y are positive and close enough for the log1p/expm1 forms to be the better choice. */
export function closePositive(x: number, y: number): boolean {
  return x > 0 && y > 0 && Math.abs(x - y) <= DIRECT_DIFFERENCE_RELATIVE_GAP * Math.max(x, y);
}

/** x^p for x > 0 with f', and a cancellation-free x^p − y^p = y^p·expm1(p·log1p((x−y)/y)). */
export function powerFunction(p: number): ScalarFunction {
  const cancellationFree = (x: number, y: number) => y ** p * Math.expm1(p * Math.log1p((x - y) / y));
  if (!(p > 0)) {
    return {
      value: (x) => x ** p,
      derivative: (x) => p * x ** (p - 1),
      difference: (x, y) => (closePositive(x, y) ? cancellationFree(x, y) : x ** p - y ** p),
    };
  }
  // p > 0 at a singular argument (a state without full rank): rounding-level negative eigenvalues count as 0 and the
  // slope at 0 (infinite for p < 1) as 0, so Fréchet derivatives stay on the support (0·∞ would be NaN), as von
  // Neumann's ln does on X's support. Positive arguments are unchanged.
  const value = (x: number) => (x > 0 ? x ** p : 0);
  return {
    value,
    derivative: (x) => (x > 0 ? p * x ** (p - 1) : p === 1 ? 1 : 0),
    difference: (x, y) => (closePositive(x, y) ? cancellationFree(x, y) : value(x) - value(y)),
  };
}

/**
 * Eigenvalues of a PSD matrix with rounding-level negatives (|λ| ≤ the support tolerance) set to 0;
 * throws if one is clearly negative.
 */
export function positiveSemidefiniteEigen(a: ComplexMatrix, caller: string): { eig: HermitianEigen; rank: number } {
  const eig = eigh(a);
  const tolerance = zeroEigenvalueTolerance(a);
  const values = eig.values;
  let rank = 0;
  for (let k = 0; k < values.length; k++) {
    if (values[k] < -tolerance) {
      throw new RangeError(`${caller}: matrix is not positive semidefinite (eigenvalue ${values[k]} < −${tolerance})`);
    }
    if (values[k] <= tolerance) values[k] = 0;
    else rank++;
  }
  return { eig, rank };
}

/**
 * A^p of a Hermitian PSD matrix. For p > 0 zero eigenvalues stay 0; p ≤ 0 needs full numerical rank
 * (restrict to the support first, see rangeIsometry) and throws otherwise.
 */
export function matrixPower(a: ComplexMatrix, p: number): ComplexMatrix {
  if (!Number.isFinite(p)) throw new RangeError(`matrixPower: exponent ${p} is not finite`);
  const { eig, rank } = positiveSemidefiniteEigen(a, 'matrixPower');
  if (p <= 0 && rank < a.rows) {
    throw new RangeError(`matrixPower: exponent ${p} ≤ 0 needs a full-rank matrix, but numerical rank is ${rank} of ${a.rows}`);
  }
  return spectralFunction(eig, (x) => (x === 0 ? 0 : x ** p));
}
