// Private dense kernels for the interior-point oracle: allocation-free, on row-major re/im arrays of n×n matrices.
// Kept inside src/oracle/ so the hot loop depends on nothing that may change underneath it (but the run's deadline poll).
import { pollAtOrder, STAGES_PER_POLL } from '../linear-algebra/interruption.js';

/**
 * In-place complex Cholesky factorization A = L·L† of a Hermitian matrix; the lower triangle receives L,
 * the strict upper triangle is zeroed. Returns false when a pivot is not positive (A not positive definite).
 */
export function choleskyInPlace(re: Float64Array, im: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    const rowJ = j * n;
    let pivot = re[rowJ + j];
    for (let k = 0; k < j; k++) pivot -= re[rowJ + k] * re[rowJ + k] + im[rowJ + k] * im[rowJ + k];
    if (!(pivot > 0)) return false;
    const diagonal = Math.sqrt(pivot);
    re[rowJ + j] = diagonal;
    im[rowJ + j] = 0;
    const inverse = 1 / diagonal;
    for (let i = j + 1; i < n; i++) {
      const rowI = i * n;
      // A_ij uses the lower triangle (A_ij = conj(A_ji)), so only the lower half of the input is read.
      let sr = re[rowI + j];
      let si = im[rowI + j];
      for (let k = 0; k < j; k++) {
        // L_ik · conj(L_jk)
        const ar = re[rowI + k];
        const ai = im[rowI + k];
        const br = re[rowJ + k];
        const bi = im[rowJ + k];
        sr -= ar * br + ai * bi;
        si -= ai * br - ar * bi;
      }
      re[rowI + j] = sr * inverse;
      im[rowI + j] = si * inverse;
    }
  }
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      re[i * n + j] = 0;
      im[i * n + j] = 0;
    }
  }
  return true;
}

/** out = L⁻¹ for a lower-triangular L with a real positive diagonal (out is lower triangular). */
export function lowerTriangularInverse(
  lRe: Float64Array,
  lIm: Float64Array,
  n: number,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  outRe.fill(0);
  outIm.fill(0);
  for (let j = 0; j < n; j++) {
    outRe[j * n + j] = 1 / lRe[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let sr = 0;
      let si = 0;
      for (let k = j; k < i; k++) {
        const ar = lRe[i * n + k];
        const ai = lIm[i * n + k];
        const br = outRe[k * n + j];
        const bi = outIm[k * n + j];
        sr += ar * br - ai * bi;
        si += ar * bi + ai * br;
      }
      const inverseDiagonal = 1 / lRe[i * n + i];
      outRe[i * n + j] = -sr * inverseDiagonal;
      outIm[i * n + j] = -si * inverseDiagonal;
    }
  }
}

/** out = U†·U for a lower-triangular U (the inverse of Z when U = L_Z⁻¹); out is Hermitian. */
export function lowerGram(uRe: Float64Array, uIm: Float64Array, n: number, outRe: Float64Array, outIm: Float64Array): void {
  for (let a = 0; a < n; a++) {
    for (let b = a; b < n; b++) {
      // Σ_{c ≥ b} conj(U_ca) U_cb
      let sr = 0;
      let si = 0;
      for (let c = b; c < n; c++) {
        const ar = uRe[c * n + a];
        const ai = uIm[c * n + a];
        const br = uRe[c * n + b];
        const bi = uIm[c * n + b];
        sr += ar * br + ai * bi;
        si += ar * bi - ai * br;
      }
      outRe[a * n + b] = sr;
      outIm[a * n + b] = si;
      outRe[b * n + a] = sr;
      outIm[b * n + a] = -si;
    }
  }
}

/** out = L·B for lower-triangular L and dense B. */
export function multiplyByLowerLeft(
  lRe: Float64Array,
  lIm: Float64Array,
  bRe: Float64Array,
  bIm: Float64Array,
  n: number,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  outRe.fill(0);
  outIm.fill(0);
  for (let i = 0; i < n; i++) {
    const rowI = i * n;
    for (let k = 0; k <= i; k++) {
      const ar = lRe[rowI + k];
      const ai = lIm[rowI + k];
      if (ar === 0 && ai === 0) continue;
      const rowK = k * n;
      for (let j = 0; j < n; j++) {
        const br = bRe[rowK + j];
        const bi = bIm[rowK + j];
        outRe[rowI + j] += ar * br - ai * bi;
        outIm[rowI + j] += ar * bi + ai * br;
      }
    }
  }
}

/** out = Hermitian part of A·U† for dense A and lower-triangular U, where A·U† is known to be Hermitian up to rounding. */
export function multiplyByLowerAdjointRightHermitian(
  aRe: Float64Array,
  aIm: Float64Array,
  uRe: Float64Array,
  uIm: Float64Array,
  n: number,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      // (A·U†)_ij = Σ_{k ≤ j} A_ik · conj(U_jk)
      let sr = 0;
      let si = 0;
      for (let k = 0; k <= j; k++) {
        const ar = aRe[i * n + k];
        const ai = aIm[i * n + k];
        const br = uRe[j * n + k];
        const bi = uIm[j * n + k];
        sr += ar * br + ai * bi;
        si += ai * br - ar * bi;
      }
      outRe[i * n + j] = sr;
      outIm[i * n + j] = si;
      outRe[j * n + i] = sr;
      outIm[j * n + i] = -si;
    }
    outIm[i * n + i] = 0;
  }
}

/** In place: A ← (A + A†)/2. */
export function hermitianPartInPlace(re: Float64Array, im: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    im[i * n + i] = 0;
    for (let j = i + 1; j < n; j++) {
      const r = 0.5 * (re[i * n + j] + re[j * n + i]);
      const s = 0.5 * (im[i * n + j] - im[j * n + i]);
      re[i * n + j] = r;
      re[j * n + i] = r;
      im[i * n + j] = s;
      im[j * n + i] = -s;
    }
  }
}

/** Re Tr(A·B) for Hermitian A and B: the Hilbert–Schmidt inner product Σ (Re A_ij Re B_ij + Im A_ij Im B_ij). */
export function hermitianInner(aRe: Float64Array, aIm: Float64Array, bRe: Float64Array, bIm: Float64Array): number {
  let s = 0;
  for (let k = 0; k < aRe.length; k++) s += aRe[k] * bRe[k] + aIm[k] * bIm[k];
  return s;
}

/** Workspace for {@link smallestEigenvalueInPlace}: diagonal, squared off-diagonal and a Householder vector. */
export class TridiagonalWorkspace {
  readonly diagonal: Float64Array;
  readonly offDiagonalSquared: Float64Array;
  readonly vRe: Float64Array;
  readonly vIm: Float64Array;
  readonly pRe: Float64Array;
  readonly pIm: Float64Array;
  constructor(n: number) {
    this.diagonal = new Float64Array(n);
    this.offDiagonalSquared = new Float64Array(n);
    this.vRe = new Float64Array(n);
    this.vIm = new Float64Array(n);
    this.pRe = new Float64Array(n);
    this.pIm = new Float64Array(n);
  }
}

/** Bisection steps for the smallest eigenvalue: enough to shrink any Gershgorin interval to rounding level. */
const BISECTION_STEPS = 80;
/** Default relative width at which bisection stops (rounding level). */
const FULL_PRECISION = 2 * Number.EPSILON;

/**
 * Smallest eigenvalue of a Hermitian matrix (destroys the input): Householder reduction to a real
 * tridiagonal matrix, then Sturm-sequence bisection (Golub & Van Loan, Matrix Computations, §8.3, §8.4).
 */
export function smallestEigenvalueInPlace(
  re: Float64Array,
  im: Float64Array,
  n: number,
  work: TridiagonalWorkspace,
  relativeTolerance = FULL_PRECISION,
  stopIfAbove = -Infinity,
): number {
  const { diagonal, offDiagonalSquared, vRe, vIm, pRe, pIm } = work;
  for (let k = 0; k < n - 2; k++) {
    // An abort between columns leaves only the destroyed input and the workspace behind.
    if (k % STAGES_PER_POLL === 0) pollAtOrder(n);
    // Householder vector for column k below the diagonal.
    let norm2 = 0;
    for (let i = k + 1; i < n; i++) norm2 += re[i * n + k] ** 2 + im[i * n + k] ** 2;
    const x0r = re[(k + 1) * n + k];
    const x0i = im[(k + 1) * n + k];
    const x0abs = Math.sqrt(x0r * x0r + x0i * x0i);
    const tailNorm2 = norm2 - x0abs * x0abs;
    if (tailNorm2 <= 0) {
      offDiagonalSquared[k] = norm2;
      continue;
    }
    const norm = Math.sqrt(norm2);
    // v = x + e^{i·arg x0}·‖x‖·e1 (no cancellation), then normalised.
    const phaseR = x0abs === 0 ? 1 : x0r / x0abs;
    const phaseI = x0abs === 0 ? 0 : x0i / x0abs;
    for (let i = 0; i < n; i++) {
      vRe[i] = 0;
      vIm[i] = 0;
    }
    vRe[k + 1] = x0r + phaseR * norm;
    vIm[k + 1] = x0i + phaseI * norm;
    for (let i = k + 2; i < n; i++) {
      vRe[i] = re[i * n + k];
      vIm[i] = im[i * n + k];
    }
    const vNorm = Math.sqrt(tailNorm2 + (x0abs + norm) ** 2);
    for (let i = k + 1; i < n; i++) {
      vRe[i] /= vNorm;
      vIm[i] /= vNorm;
    }
    // p = A·v on the trailing block (rows/cols k+1..n-1).
    let kappa = 0;
    for (let i = k + 1; i < n; i++) {
      let sr = 0;
      let si = 0;
      for (let j = k + 1; j < n; j++) {
        const ar = re[i * n + j];
        const ai = im[i * n + j];
        sr += ar * vRe[j] - ai * vIm[j];
        si += ar * vIm[j] + ai * vRe[j];
      }
      pRe[i] = sr;
      pIm[i] = si;
      kappa += vRe[i] * sr + vIm[i] * si; // Re(v†p) = v†Av (real)
    }
    // w = p − κ·v; A ← A − 2·v·w† − 2·w·v† on the trailing block.
    for (let i = k + 1; i < n; i++) {
      pRe[i] -= kappa * vRe[i];
      pIm[i] -= kappa * vIm[i];
    }
    for (let i = k + 1; i < n; i++) {
      for (let j = k + 1; j < n; j++) {
        // v_i conj(w_j) + w_i conj(v_j)
        const r1 = vRe[i] * pRe[j] + vIm[i] * pIm[j];
        const i1 = vIm[i] * pRe[j] - vRe[i] * pIm[j];
        const r2 = pRe[i] * vRe[j] + pIm[i] * vIm[j];
        const i2 = pIm[i] * vRe[j] - pRe[i] * vIm[j];
        re[i * n + j] -= 2 * (r1 + r2);
        im[i * n + j] -= 2 * (i1 + i2);
      }
    }
    // The reflected column k is −phase·‖x‖·e1: only its modulus matters for the eigenvalues.
    offDiagonalSquared[k] = norm2;
  }
  for (let i = 0; i < n; i++) diagonal[i] = re[i * n + i];
  if (n >= 2) offDiagonalSquared[n - 2] = re[(n - 1) * n + n - 2] ** 2 + im[(n - 1) * n + n - 2] ** 2;
  return smallestTridiagonalEigenvalue(diagonal, offDiagonalSquared, n, relativeTolerance, stopIfAbove);
}

/** Number of eigenvalues below x of the tridiagonal matrix (negative pivots of T − x·1, Sturm count). */
function eigenvaluesBelow(diagonal: Float64Array, offDiagonalSquared: Float64Array, n: number, x: number, pivotFloor: number): number {
  let negatives = 0;
  let q = diagonal[0] - x;
  if (q < 0) negatives++;
  for (let i = 1; i < n; i++) {
    if (Math.abs(q) < pivotFloor) q = q < 0 ? -pivotFloor : pivotFloor;
    q = diagonal[i] - x - offDiagonalSquared[i - 1] / q;
    if (q < 0) negatives++;
  }
  return negatives;
}

/**
 * Smallest eigenvalue of the real symmetric tridiagonal matrix (diagonal, off-diagonal²) by Sturm bisection, to
 * `relativeTolerance` of the spectral scale; returns the lower end of the final bracket (never above λ_min up to
 * rounding). If no eigenvalue lies below `stopIfAbove`, returns `stopIfAbove` at once.
 */
function smallestTridiagonalEigenvalue(
  diagonal: Float64Array,
  offDiagonalSquared: Float64Array,
  n: number,
  relativeTolerance: number,
  stopIfAbove: number,
): number {
  if (n === 1) return diagonal[0];
  let lower = Infinity;
  let upper = -Infinity;
  for (let i = 0; i < n; i++) {
    const left = i > 0 ? Math.sqrt(offDiagonalSquared[i - 1]) : 0;
    const right = i < n - 1 ? Math.sqrt(offDiagonalSquared[i]) : 0;
    lower = Math.min(lower, diagonal[i] - left - right);
    upper = Math.max(upper, diagonal[i] + left + right);
  }
  const scale = Math.max(Math.abs(lower), Math.abs(upper), Number.MIN_VALUE);
  const pivotFloor = Number.EPSILON * scale;
  if (stopIfAbove > lower) {
    if (eigenvaluesBelow(diagonal, offDiagonalSquared, n, stopIfAbove, pivotFloor) === 0) return stopIfAbove;
    upper = Math.min(upper, stopIfAbove);
  }
  const width = Math.max(relativeTolerance, FULL_PRECISION) * scale;
  for (let step = 0; step < BISECTION_STEPS && upper - lower > width; step++) {
    const middle = 0.5 * (lower + upper);
    if (eigenvaluesBelow(diagonal, offDiagonalSquared, n, middle, pivotFloor) >= 1) upper = middle;
    else lower = middle;
  }
  return lower;
}

/** Solves L·L^T·x = b in place (b ← x) with the factor from {@link choleskyInPlaceReal}. */
export function realCholeskySolveInPlace(l: Float64Array, m: number, b: Float64Array): void {
  for (let i = 0; i < m; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i * m + k] * b[k];
    b[i] = s / l[i * m + i];
  }
  for (let i = m - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < m; k++) s -= l[k * m + i] * b[k];
    b[i] = s / l[i * m + i];
  }
}

/** out = Aᵀ (plain transpose, no conjugation). */
export function transposeInto(aRe: Float64Array, aIm: Float64Array, n: number, outRe: Float64Array, outIm: Float64Array): void {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      outRe[j * n + i] = aRe[i * n + j];
      outIm[j * n + i] = aIm[i * n + j];
    }
  }
}

/**
 * out = U·A·L for lower-triangular U and L (strict upper parts stored as zeros), given lt = Lᵀ; wt is scratch.
 * Both products run as contiguous dot products in 2×2 blocks, so each loaded entry serves two multiply-adds
 * (about twice the speed of row updates in V8).
 */
export function lowerCongruence(
  aRe: Float64Array,
  aIm: Float64Array,
  ltRe: Float64Array,
  ltIm: Float64Array,
  uRe: Float64Array,
  uIm: Float64Array,
  n: number,
  wtRe: Float64Array,
  wtIm: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  transposedProductWithLower(aRe, aIm, ltRe, ltIm, n, wtRe, wtIm);
  lowerTimesTransposed(uRe, uIm, wtRe, wtIm, n, outRe, outIm);
}

/** wt = (A·L)ᵀ for dense A and lower-triangular L, given lt = Lᵀ. */
export function transposedProductWithLower(
  aRe: Float64Array,
  aIm: Float64Array,
  ltRe: Float64Array,
  ltIm: Float64Array,
  n: number,
  wtRe: Float64Array,
  wtIm: Float64Array,
): void {
  // Wᵀ[j][i] = (A·L)[i][j] = Σ_{k ≥ j} A[i][k]·Lᵀ[j][k]  (Lᵀ[j+1][j] = 0, so row j+1 may start at k = j).
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00r = 0;
      let s00i = 0;
      let s01r = 0;
      let s01i = 0;
      let s10r = 0;
      let s10i = 0;
      let s11r = 0;
      let s11i = 0;
      for (let k = j; k < n; k++) {
        const a0r = aRe[r0 + k];
        const a0i = aIm[r0 + k];
        const a1r = aRe[r1 + k];
        const a1i = aIm[r1 + k];
        const l0r = ltRe[c0 + k];
        const l0i = ltIm[c0 + k];
        const l1r = ltRe[c1 + k];
        const l1i = ltIm[c1 + k];
        s00r += a0r * l0r - a0i * l0i;
        s00i += a0r * l0i + a0i * l0r;
        s01r += a0r * l1r - a0i * l1i;
        s01i += a0r * l1i + a0i * l1r;
        s10r += a1r * l0r - a1i * l0i;
        s10i += a1r * l0i + a1i * l0r;
        s11r += a1r * l1r - a1i * l1i;
        s11i += a1r * l1i + a1i * l1r;
      }
      wtRe[c0 + i] = s00r;
      wtIm[c0 + i] = s00i;
      wtRe[c1 + i] = s01r;
      wtIm[c1 + i] = s01i;
      wtRe[c0 + i1] = s10r;
      wtIm[c0 + i1] = s10i;
      wtRe[c1 + i1] = s11r;
      wtIm[c1 + i1] = s11i;
    }
  }
}

/** out = U·W for lower-triangular U, given wt = Wᵀ. */
export function lowerTimesTransposed(
  uRe: Float64Array,
  uIm: Float64Array,
  wtRe: Float64Array,
  wtIm: Float64Array,
  n: number,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  // out[i][j] = Σ_{k ≤ i} U[i][k]·Wᵀ[j][k]  (U[i][i+1] = 0, so row i may run to k = i+1).
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    const end = i1 + 1;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00r = 0;
      let s00i = 0;
      let s01r = 0;
      let s01i = 0;
      let s10r = 0;
      let s10i = 0;
      let s11r = 0;
      let s11i = 0;
      for (let k = 0; k < end; k++) {
        const a0r = uRe[r0 + k];
        const a0i = uIm[r0 + k];
        const a1r = uRe[r1 + k];
        const a1i = uIm[r1 + k];
        const b0r = wtRe[c0 + k];
        const b0i = wtIm[c0 + k];
        const b1r = wtRe[c1 + k];
        const b1i = wtIm[c1 + k];
        s00r += a0r * b0r - a0i * b0i;
        s00i += a0r * b0i + a0i * b0r;
        s01r += a0r * b1r - a0i * b1i;
        s01i += a0r * b1i + a0i * b1r;
        s10r += a1r * b0r - a1i * b0i;
        s10i += a1r * b0i + a1i * b0r;
        s11r += a1r * b1r - a1i * b1i;
        s11i += a1r * b1i + a1i * b1r;
      }
      outRe[r0 + j] = s00r;
      outIm[r0 + j] = s00i;
      outRe[r0 + j1] = s01r;
      outIm[r0 + j1] = s01i;
      outRe[r1 + j] = s10r;
      outIm[r1 + j] = s10i;
      outRe[r1 + j1] = s11r;
      outIm[r1 + j1] = s11i;
    }
  }
}

/** A Hermitian operator with few nonzeros, in compressed sparse rows. */
export interface SparseOperator {
  rowStart: Int32Array;
  columns: Int32Array;
  re: Float64Array;
  im: Float64Array;
}

/** Compressed-sparse-row copy of a dense n×n matrix. */
export function toSparse(re: Float64Array, im: Float64Array, n: number): SparseOperator {
  let count = 0;
  for (let t = 0; t < n * n; t++) if (re[t] !== 0 || im[t] !== 0) count++;
  const rowStart = new Int32Array(n + 1);
  const columns = new Int32Array(count);
  const values = { re: new Float64Array(count), im: new Float64Array(count) };
  let p = 0;
  for (let i = 0; i < n; i++) {
    rowStart[i] = p;
    for (let j = 0; j < n; j++) {
      const r = re[i * n + j];
      const s = im[i * n + j];
      if (r === 0 && s === 0) continue;
      columns[p] = j;
      values.re[p] = r;
      values.im[p] = s;
      p++;
    }
  }
  rowStart[n] = p;
  return { rowStart, columns, re: values.re, im: values.im };
}

/** wt = (A·L)ᵀ for sparse A and lower-triangular L: nnz(A)·n/2 multiply-adds instead of n³/2. */
export function transposedSparseProductWithLower(
  a: SparseOperator,
  lRe: Float64Array,
  lIm: Float64Array,
  n: number,
  wtRe: Float64Array,
  wtIm: Float64Array,
): void {
  wtRe.fill(0);
  wtIm.fill(0);
  for (let i = 0; i < n; i++) {
    for (let p = a.rowStart[i]; p < a.rowStart[i + 1]; p++) {
      const k = a.columns[p];
      const ar = a.re[p];
      const ai = a.im[p];
      const rowK = k * n;
      // (A·L)[i][j] += A[i][k]·L[k][j] for j ≤ k, stored at wt[j][i].
      for (let j = 0; j <= k; j++) {
        const br = lRe[rowK + j];
        const bi = lIm[rowK + j];
        wtRe[j * n + i] += ar * br - ai * bi;
        wtIm[j * n + i] += ar * bi + ai * br;
      }
    }
  }
}

/**
 * out = A·B for dense A and Hermitian B (out must not alias A or B): (A·B)_ij = Σ_k A_ik·conj(B_jk) runs along
 * rows of both, in 2×2 blocks (the same access pattern as {@link lowerCongruence}).
 */
export function multiplyByHermitian(
  aRe: Float64Array,
  aIm: Float64Array,
  bRe: Float64Array,
  bIm: Float64Array,
  n: number,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00r = 0;
      let s00i = 0;
      let s01r = 0;
      let s01i = 0;
      let s10r = 0;
      let s10i = 0;
      let s11r = 0;
      let s11i = 0;
      for (let k = 0; k < n; k++) {
        const a0r = aRe[r0 + k];
        const a0i = aIm[r0 + k];
        const a1r = aRe[r1 + k];
        const a1i = aIm[r1 + k];
        // conj(B_jk) = B_kj
        const b0r = bRe[c0 + k];
        const b0i = -bIm[c0 + k];
        const b1r = bRe[c1 + k];
        const b1i = -bIm[c1 + k];
        s00r += a0r * b0r - a0i * b0i;
        s00i += a0r * b0i + a0i * b0r;
        s01r += a0r * b1r - a0i * b1i;
        s01i += a0r * b1i + a0i * b1r;
        s10r += a1r * b0r - a1i * b0i;
        s10i += a1r * b0i + a1i * b0r;
        s11r += a1r * b1r - a1i * b1i;
        s11i += a1r * b1i + a1i * b1r;
      }
      outRe[r0 + j] = s00r;
      outIm[r0 + j] = s00i;
      outRe[r0 + j1] = s01r;
      outIm[r0 + j1] = s01i;
      outRe[r1 + j] = s10r;
      outIm[r1 + j] = s10i;
      outRe[r1 + j1] = s11r;
      outIm[r1 + j1] = s11i;
    }
  }
}

// Real-arithmetic twins of the kernels above, used when G and every constraint operator are real (then every
// iterate stays real and the imaginary parts would only multiply zeros): about a quarter of the work.

/**
 * Real symmetric version of {@link choleskyInPlace}: A = L·Lᵀ in the lower triangle, upper triangle zeroed; false if
 * A is not positive definite. The one real Cholesky of the oracle (cone factors and the Schur complement).
 */
export function choleskyInPlaceReal(a: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    const rowJ = j * n;
    let pivot = a[rowJ + j];
    for (let k = 0; k < j; k++) pivot -= a[rowJ + k] * a[rowJ + k];
    if (!(pivot > 0)) return false;
    const diagonal = Math.sqrt(pivot);
    a[rowJ + j] = diagonal;
    const inverse = 1 / diagonal;
    for (let i = j + 1; i < n; i++) {
      const rowI = i * n;
      let sum = a[rowI + j];
      for (let k = 0; k < j; k++) sum -= a[rowI + k] * a[rowJ + k];
      a[rowI + j] = sum * inverse;
    }
  }
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) a[i * n + j] = 0;
  return true;
}

/** Real version of {@link lowerTriangularInverse}. */
export function lowerTriangularInverseReal(l: Float64Array, n: number, out: Float64Array): void {
  out.fill(0);
  for (let j = 0; j < n; j++) {
    out[j * n + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let sum = 0;
      for (let k = j; k < i; k++) sum += l[i * n + k] * out[k * n + j];
      out[i * n + j] = -sum / l[i * n + i];
    }
  }
}

/** Real version of {@link lowerGram}: out = Uᵀ·U. */
export function lowerGramReal(u: Float64Array, n: number, out: Float64Array): void {
  for (let a = 0; a < n; a++) {
    for (let b = a; b < n; b++) {
      let sum = 0;
      for (let c = b; c < n; c++) sum += u[c * n + a] * u[c * n + b];
      out[a * n + b] = sum;
      out[b * n + a] = sum;
    }
  }
}

/** Real version of {@link multiplyByHermitian}: out = A·B for symmetric B, as rows-by-rows dot products in 2×2 blocks. */
export function multiplyBySymmetricReal(a: Float64Array, b: Float64Array, n: number, out: Float64Array): void {
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00 = 0;
      let s01 = 0;
      let s10 = 0;
      let s11 = 0;
      for (let k = 0; k < n; k++) {
        const a0 = a[r0 + k];
        const a1 = a[r1 + k];
        const b0 = b[c0 + k];
        const b1 = b[c1 + k];
        s00 += a0 * b0;
        s01 += a0 * b1;
        s10 += a1 * b0;
        s11 += a1 * b1;
      }
      out[r0 + j] = s00;
      out[r0 + j1] = s01;
      out[r1 + j] = s10;
      out[r1 + j1] = s11;
    }
  }
}

/** Real version of {@link transposedProductWithLower}: wt = (A·L)ᵀ given lt = Lᵀ. */
export function transposedProductWithLowerReal(a: Float64Array, lt: Float64Array, n: number, wt: Float64Array): void {
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00 = 0;
      let s01 = 0;
      let s10 = 0;
      let s11 = 0;
      for (let k = j; k < n; k++) {
        const a0 = a[r0 + k];
        const a1 = a[r1 + k];
        const l0 = lt[c0 + k];
        const l1 = lt[c1 + k];
        s00 += a0 * l0;
        s01 += a0 * l1;
        s10 += a1 * l0;
        s11 += a1 * l1;
      }
      wt[c0 + i] = s00;
      wt[c1 + i] = s01;
      wt[c0 + i1] = s10;
      wt[c1 + i1] = s11;
    }
  }
}

/** Real version of {@link lowerTimesTransposed}: out = U·W given wt = Wᵀ. */
export function lowerTimesTransposedReal(u: Float64Array, wt: Float64Array, n: number, out: Float64Array): void {
  for (let i = 0; i < n; i += 2) {
    const i1 = i + 1 < n ? i + 1 : i;
    const r0 = i * n;
    const r1 = i1 * n;
    const end = i1 + 1;
    for (let j = 0; j < n; j += 2) {
      const j1 = j + 1 < n ? j + 1 : j;
      const c0 = j * n;
      const c1 = j1 * n;
      let s00 = 0;
      let s01 = 0;
      let s10 = 0;
      let s11 = 0;
      for (let k = 0; k < end; k++) {
        const a0 = u[r0 + k];
        const a1 = u[r1 + k];
        const b0 = wt[c0 + k];
        const b1 = wt[c1 + k];
        s00 += a0 * b0;
        s01 += a0 * b1;
        s10 += a1 * b0;
        s11 += a1 * b1;
      }
      out[r0 + j] = s00;
      out[r0 + j1] = s01;
      out[r1 + j] = s10;
      out[r1 + j1] = s11;
    }
  }
}

/** Real version of {@link transposedSparseProductWithLower}. */
export function transposedSparseProductWithLowerReal(a: SparseOperator, l: Float64Array, n: number, wt: Float64Array): void {
  wt.fill(0);
  for (let i = 0; i < n; i++) {
    for (let p = a.rowStart[i]; p < a.rowStart[i + 1]; p++) {
      const k = a.columns[p];
      const value = a.re[p];
      const rowK = k * n;
      for (let j = 0; j <= k; j++) wt[j * n + i] += value * l[rowK + j];
    }
  }
}

/** Real version of the step-length congruence: out = U·D·Uᵀ (symmetric) for lower-triangular U; tmp is scratch. */
export function lowerCongruenceSymmetricReal(u: Float64Array, d: Float64Array, n: number, tmp: Float64Array, out: Float64Array): void {
  // tmp = U·D (rows of U have nonzeros up to the diagonal).
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let sum = 0;
      for (let k = 0; k <= i; k++) sum += u[i * n + k] * d[k * n + j];
      tmp[i * n + j] = sum;
    }
  }
  // out = tmp·Uᵀ: out_ij = Σ_{k ≤ j} tmp_ik·U_jk, symmetric.
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let sum = 0;
      for (let k = 0; k <= j; k++) sum += tmp[i * n + k] * u[j * n + k];
      out[i * n + j] = sum;
      out[j * n + i] = sum;
    }
  }
}

/** Real symmetric version of {@link smallestEigenvalueInPlace} (Householder tridiagonalisation + Sturm bisection). */
export function smallestEigenvalueInPlaceReal(
  a: Float64Array,
  n: number,
  work: TridiagonalWorkspace,
  relativeTolerance = FULL_PRECISION,
  stopIfAbove = -Infinity,
): number {
  const { diagonal, offDiagonalSquared, vRe: v, pRe: p } = work;
  for (let k = 0; k < n - 2; k++) {
    if (k % STAGES_PER_POLL === 0) pollAtOrder(n);
    let norm2 = 0;
    for (let i = k + 1; i < n; i++) norm2 += a[i * n + k] * a[i * n + k];
    const x0 = a[(k + 1) * n + k];
    const tailNorm2 = norm2 - x0 * x0;
    if (tailNorm2 <= 0) {
      offDiagonalSquared[k] = norm2;
      continue;
    }
    const norm = Math.sqrt(norm2);
    const sign = x0 >= 0 ? 1 : -1;
    v.fill(0);
    v[k + 1] = x0 + sign * norm;
    for (let i = k + 2; i < n; i++) v[i] = a[i * n + k];
    const vNorm = Math.sqrt(tailNorm2 + (Math.abs(x0) + norm) ** 2);
    for (let i = k + 1; i < n; i++) v[i] /= vNorm;
    let kappa = 0;
    for (let i = k + 1; i < n; i++) {
      let sum = 0;
      for (let j = k + 1; j < n; j++) sum += a[i * n + j] * v[j];
      p[i] = sum;
      kappa += v[i] * sum;
    }
    for (let i = k + 1; i < n; i++) p[i] -= kappa * v[i];
    for (let i = k + 1; i < n; i++) {
      for (let j = k + 1; j < n; j++) a[i * n + j] -= 2 * (v[i] * p[j] + p[i] * v[j]);
    }
    offDiagonalSquared[k] = norm2;
  }
  for (let i = 0; i < n; i++) diagonal[i] = a[i * n + i];
  if (n >= 2) offDiagonalSquared[n - 2] = a[(n - 1) * n + n - 2] ** 2;
  return smallestTridiagonalEigenvalue(diagonal, offDiagonalSquared, n, relativeTolerance, stopIfAbove);
}

/** Entries per chunk of the blocked pair sums: a chunk of every vector stays in cache while all pairs use it. */
const PAIR_SUM_CHUNK = 128;

/**
 * out[j·count + l] = out[l·count + j] = Σ_t a_j[t]·b_l[t] + sign·a'_j[t]·b'_l[t] for l ≤ j, over `count` vectors of
 * length `size` stored back to back (a' and b' the imaginary parts, null for real data): the Gram part of the Schur
 * complement (a = b, sign +1: Re⟨Q_j, Q_l⟩) and its tensor-product form (sign −1: Re Σ S_j[t]·T_l[t]). Blocked over
 * t, so that each chunk of all vectors is read from cache rather than memory, and over two a-vectors and four
 * b-vectors at once, so that each loaded entry serves two to four multiply–adds (the loop is load-bound otherwise).
 * Within a chunk every entry is summed in the order of the unblocked Gram.
 */
export function blockedPairSums(
  aRe: Float64Array,
  aIm: Float64Array | null,
  bRe: Float64Array,
  bIm: Float64Array | null,
  sign: number,
  count: number,
  size: number,
  out: Float64Array,
): void {
  out.fill(0, 0, count * count);
  for (let start = 0; start < size; start += PAIR_SUM_CHUNK) {
    const end = Math.min(size, start + PAIR_SUM_CHUNK);
    let j = 0;
    for (; j + 1 < count; j += 2) {
      // Rows j and j + 1 share every b_l with l ≤ j; row j + 1 also pairs with b_{j+1}.
      const oj = j * size;
      const ok = oj + size;
      let l = 0;
      for (; l + 3 <= j; l += 4) pairBlock(aRe, aIm, bRe, bIm, sign, oj, ok, l * size, size, start, end, out, j * count + l, (j + 1) * count + l);
      for (; l <= j; l++) {
        out[j * count + l] += pairSum(aRe, aIm, bRe, bIm, sign, oj, l * size, start, end);
        out[(j + 1) * count + l] += pairSum(aRe, aIm, bRe, bIm, sign, ok, l * size, start, end);
      }
      out[(j + 1) * count + j + 1] += pairSum(aRe, aIm, bRe, bIm, sign, ok, (j + 1) * size, start, end);
    }
    for (; j < count; j++) {
      for (let l = 0; l <= j; l++) out[j * count + l] += pairSum(aRe, aIm, bRe, bIm, sign, j * size, l * size, start, end);
    }
  }
  for (let j = 0; j < count; j++) for (let l = 0; l < j; l++) out[l * count + j] = out[j * count + l];
}

/** Σ_{t ∈ [start, end)} a[oa + t]·b[ob + t] + sign·a'[oa + t]·b'[ob + t]. */
function pairSum(
  aRe: Float64Array,
  aIm: Float64Array | null,
  bRe: Float64Array,
  bIm: Float64Array | null,
  sign: number,
  oa: number,
  ob: number,
  start: number,
  end: number,
): number {
  let sum = 0;
  if (aIm && bIm) for (let t = start; t < end; t++) sum += aRe[oa + t] * bRe[ob + t] + sign * aIm[oa + t] * bIm[ob + t];
  else for (let t = start; t < end; t++) sum += aRe[oa + t] * bRe[ob + t];
  return sum;
}

/** The 2×4 block of {@link blockedPairSums}: a-vectors at oj and ok against the four b-vectors from o0 on. */
function pairBlock(
  aRe: Float64Array,
  aIm: Float64Array | null,
  bRe: Float64Array,
  bIm: Float64Array | null,
  sign: number,
  oj: number,
  ok: number,
  o0: number,
  size: number,
  start: number,
  end: number,
  out: Float64Array,
  outJ: number,
  outK: number,
): void {
  const o1 = o0 + size;
  const o2 = o1 + size;
  const o3 = o2 + size;
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let u0 = 0;
  let u1 = 0;
  let u2 = 0;
  let u3 = 0;
  if (aIm && bIm) {
    // Real and imaginary products in one sum per entry (sign·x is exact): the summation order of the unblocked Gram.
    for (let t = start; t < end; t++) {
      const x = aRe[oj + t];
      const xi = sign * aIm[oj + t];
      const y = aRe[ok + t];
      const yi = sign * aIm[ok + t];
      const b0 = bRe[o0 + t];
      const c0 = bIm[o0 + t];
      const b1 = bRe[o1 + t];
      const c1 = bIm[o1 + t];
      const b2 = bRe[o2 + t];
      const c2 = bIm[o2 + t];
      const b3 = bRe[o3 + t];
      const c3 = bIm[o3 + t];
      s0 += x * b0 + xi * c0;
      s1 += x * b1 + xi * c1;
      s2 += x * b2 + xi * c2;
      s3 += x * b3 + xi * c3;
      u0 += y * b0 + yi * c0;
      u1 += y * b1 + yi * c1;
      u2 += y * b2 + yi * c2;
      u3 += y * b3 + yi * c3;
    }
  } else {
    for (let t = start; t < end; t++) {
      const x = aRe[oj + t];
      const y = aRe[ok + t];
      const b0 = bRe[o0 + t];
      const b1 = bRe[o1 + t];
      const b2 = bRe[o2 + t];
      const b3 = bRe[o3 + t];
      s0 += x * b0;
      s1 += x * b1;
      s2 += x * b2;
      s3 += x * b3;
      u0 += y * b0;
      u1 += y * b1;
      u2 += y * b2;
      u3 += y * b3;
    }
  }
  out[outJ] += s0;
  out[outJ + 1] += s1;
  out[outJ + 2] += s2;
  out[outJ + 3] += s3;
  out[outK] += u0;
  out[outK + 1] += u1;
  out[outK + 2] += u2;
  out[outK + 3] += u3;
}
