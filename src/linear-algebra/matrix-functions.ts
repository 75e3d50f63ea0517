// Functions of Hermitian matrices through their eigendecomposition, and their Fréchet derivatives
// (Daleckii–Krein formula).
import { ComplexMatrix } from './complex-matrix.js';
import { eigh, type HermitianEigen } from './eigen.js';
import { zeroEigenvalueTolerance } from './support.js';

/**
 * Relative eigenvalue gap below which a divided difference (f(x) − f(y))/(x − y) is replaced by f'
 * at the midpoint. The quotient loses about u·|f|/(|x−y|·|f'|) to cancellation while the midpoint
 * derivative is off by about |f'''|·(x−y)²/24, so the crossover sits near u^{1/3} ≈ 5e-6 relative;
 * both errors are then ~1e-11 relative for powers and logarithms.
 */
export const DIVIDED_DIFFERENCE_RELATIVE_GAP = Math.cbrt(2 ** -53);

/** A scalar function with its derivative and, optionally, a cancellation-free difference f(x) − f(y). */
export interface ScalarFunction {
  value: (x: number) => number;
  derivative: (x: number) => number;
  /** f(x) − f(y) computed without cancellation for nearby x, y (used for divided differences). */
  difference?: (x: number, y: number) => number;
}

/** f(A) = V·f(Λ)·V† for A = V·Λ·V†; the result is exactly Hermitian (lower triangle mirrored). */
export function spectralFunction(eig: HermitianEigen, f: (x: number) => number): ComplexMatrix {
  const { values, vectors } = eig;
  const n = values.length;
  const vr = vectors.re;
  const vi = vectors.im;
  const cols = vectors.cols;
  const rows = vectors.rows;
  if (cols !== n) throw new RangeError(`spectralFunction: ${n} eigenvalues but ${cols} eigenvectors`);
  const fv = new Float64Array(n);
  for (let k = 0; k < n; k++) fv[k] = f(values[k]);
  // F = V·diag(f), then (F·V†)_ij = Σ_k F_ik·conj(V_jk), rows of F and V contiguous in k.
  const fr = new Float64Array(rows * n);
  const fi = new Float64Array(rows * n);
  for (let i = 0; i < rows; i++) {
    for (let k = 0; k < n; k++) {
      fr[i * n + k] = vr[i * n + k] * fv[k];
      fi[i * n + k] = vi[i * n + k] * fv[k];
    }
  }
  const out = new ComplexMatrix(rows, rows);
  const or = out.re;
  const oi = out.im;
  for (let i = 0; i < rows; i++) {
    const ri = i * n;
    for (let j = 0; j <= i; j++) {
      const rj = j * n;
      let sr = 0;
      let si = 0;
      for (let k = 0; k < n; k++) {
        const ar = fr[ri + k];
        const ai = fi[ri + k];
        const br = vr[rj + k];
        const bi = vi[rj + k];
        sr += ar * br + ai * bi;
        si += ai * br - ar * bi;
      }
      or[i * rows + j] = sr;
      oi[i * rows + j] = si;
      or[j * rows + i] = sr;
      oi[j * rows + i] = -si;
    }
    oi[i * rows + i] = 0;
  }
  return out;
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
 * Γ = dividedDifferences(Λ, f, f'). Works for any square H (Hermitian H gives a Hermitian result).
 */
export function frechetDerivative(eig: HermitianEigen, gamma: Float64Array, h: ComplexMatrix): ComplexMatrix {
  const n = eig.values.length;
  const v = eig.vectors;
  if (v.rows !== n || v.cols !== n) throw new RangeError(`frechetDerivative: eigenvectors are ${v.rows}x${v.cols}, expected ${n}x${n}`);
  if (h.rows !== n || h.cols !== n) throw new RangeError(`frechetDerivative: direction is ${h.rows}x${h.cols}, expected ${n}x${n}`);
  if (gamma.length !== n * n) throw new RangeError(`frechetDerivative: ${gamma.length} divided differences, expected ${n * n}`);
  const vr = v.re;
  const vi = v.im;
  const t1r = new Float64Array(n * n);
  const t1i = new Float64Array(n * n);
  // T1 = H·V (i-k-j order streams rows of V).
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) {
      const hr = h.re[i * n + k];
      const hi = h.im[i * n + k];
      if (hr === 0 && hi === 0) continue;
      const rk = k * n;
      const ri = i * n;
      for (let j = 0; j < n; j++) {
        const br = vr[rk + j];
        const bi = vi[rk + j];
        t1r[ri + j] += hr * br - hi * bi;
        t1i[ri + j] += hr * bi + hi * br;
      }
    }
  }
  // T2 = Γ ∘ (V†·T1): (V†T1)_ij = Σ_k conj(V_ki)·T1_kj, accumulated row k at a time.
  const t2r = new Float64Array(n * n);
  const t2i = new Float64Array(n * n);
  for (let k = 0; k < n; k++) {
    const rk = k * n;
    for (let i = 0; i < n; i++) {
      const ar = vr[rk + i];
      const ai = -vi[rk + i];
      const ri = i * n;
      for (let j = 0; j < n; j++) {
        const br = t1r[rk + j];
        const bi = t1i[rk + j];
        t2r[ri + j] += ar * br - ai * bi;
        t2i[ri + j] += ar * bi + ai * br;
      }
    }
  }
  for (let k = 0; k < n * n; k++) {
    t2r[k] *= gamma[k];
    t2i[k] *= gamma[k];
  }
  // T3 = V·T2, result = T3·V†: (T3·V†)_ij = Σ_k T3_ik·conj(V_jk).
  t1r.fill(0);
  t1i.fill(0);
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let k = 0; k < n; k++) {
      const ar = vr[ri + k];
      const ai = vi[ri + k];
      const rk = k * n;
      for (let j = 0; j < n; j++) {
        const br = t2r[rk + j];
        const bi = t2i[rk + j];
        t1r[ri + j] += ar * br - ai * bi;
        t1i[ri + j] += ar * bi + ai * br;
      }
    }
  }
  const out = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = 0; j < n; j++) {
      const rj = j * n;
      let sr = 0;
      let si = 0;
      for (let k = 0; k < n; k++) {
        const ar = t1r[ri + k];
        const ai = t1i[ri + k];
        const br = vr[rj + k];
        const bi = vi[rj + k];
        sr += ar * br + ai * bi;
        si += ai * br - ar * bi;
      }
      out.re[ri + j] = sr;
      out.im[ri + j] = si;
    }
  }
  return out;
}

/** x^p for x > 0 with f', and a cancellation-free x^p − y^p = y^p·expm1(p·log1p((x−y)/y)). */
export function powerFunction(p: number): ScalarFunction {
  return {
    value: (x) => x ** p,
    derivative: (x) => p * x ** (p - 1),
    difference: (x, y) => y ** p * Math.expm1(p * Math.log1p((x - y) / y)),
  };
}

/** Natural logarithm with f' = 1/x and a cancellation-free ln x − ln y = log1p((x−y)/y). */
export const naturalLogFunction: ScalarFunction = {
  value: (x) => Math.log(x),
  derivative: (x) => 1 / x,
  difference: (x, y) => Math.log1p((x - y) / y),
};

/**
 * Eigenvalues of a PSD matrix with rounding-level negatives (|λ| ≤ the support tolerance) set to 0;
 * throws if one is clearly negative.
 */
function positiveSemidefiniteEigen(a: ComplexMatrix, caller: string): { eig: HermitianEigen; rank: number } {
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

/** √A of a Hermitian PSD matrix (the PSD square root). */
export function matrixSqrt(a: ComplexMatrix): ComplexMatrix {
  const { eig } = positiveSemidefiniteEigen(a, 'matrixSqrt');
  return spectralFunction(eig, Math.sqrt);
}

/** Natural logarithm of a Hermitian positive-definite matrix; throws if it is not full rank. */
export function matrixLog(a: ComplexMatrix): ComplexMatrix {
  const { eig, rank } = positiveSemidefiniteEigen(a, 'matrixLog');
  if (rank < a.rows) {
    throw new RangeError(`matrixLog: matrix is not positive definite (numerical rank ${rank} of ${a.rows})`);
  }
  return spectralFunction(eig, Math.log);
}
