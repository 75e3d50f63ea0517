// Complex matrices in double-double arithmetic (the `double-double` package's operations, about 106 bits): products
// and a Hermitian eigendecomposition by cyclic Jacobi rotations. Used where eigenvalues near 1e-15 of the norm must
// be resolved to high relative accuracy (docs/faces.md, "Petz lifts in double-double").
import { createRequire } from 'node:module';
import type * as DoubleDouble from 'double-double';
import { ComplexMatrix, hermitianPart } from './complex-matrix.js';
import { eigh } from './eigen.js';

let library: typeof DoubleDouble | undefined;

/** The package, required on first use: only lifted Petz-down certificates need it. */
function dd(): typeof DoubleDouble {
  library ??= createRequire(import.meta.url)('double-double') as typeof DoubleDouble;
  return library;
}

/** A double-double number as the package stores it: [low, high]. */
export type Dd = number[];

/** Unit roundoff of double-double arithmetic, 2^−104 (each operation of the package errs by a few of these). */
export const DD_UNIT_ROUNDOFF = 2 ** -104;

/** A complex matrix whose entries are double-doubles: high and low parts of the real and imaginary entries, row-major. */
export class DdMatrix {
  readonly reHigh: Float64Array;
  readonly reLow: Float64Array;
  readonly imHigh: Float64Array;
  readonly imLow: Float64Array;

  constructor(
    readonly rows: number,
    readonly cols: number,
  ) {
    this.reHigh = new Float64Array(rows * cols);
    this.reLow = new Float64Array(rows * cols);
    this.imHigh = new Float64Array(rows * cols);
    this.imLow = new Float64Array(rows * cols);
  }

  re(i: number, j: number): Dd {
    const k = i * this.cols + j;
    return [this.reLow[k], this.reHigh[k]];
  }

  im(i: number, j: number): Dd {
    const k = i * this.cols + j;
    return [this.imLow[k], this.imHigh[k]];
  }

  set(i: number, j: number, re: Dd, im: Dd): void {
    const k = i * this.cols + j;
    this.reLow[k] = re[0];
    this.reHigh[k] = re[1];
    this.imLow[k] = im[0];
    this.imHigh[k] = im[1];
  }

  static from(m: ComplexMatrix): DdMatrix {
    const out = new DdMatrix(m.rows, m.cols);
    out.reHigh.set(m.re);
    out.imHigh.set(m.im);
    return out;
  }

  /** Rounded to doubles. */
  toDouble(): ComplexMatrix {
    const out = new ComplexMatrix(this.rows, this.cols);
    for (let k = 0; k < out.re.length; k++) {
      out.re[k] = this.reHigh[k] + this.reLow[k];
      out.im[k] = this.imHigh[k] + this.imLow[k];
    }
    return out;
  }

  /** Frobenius norm, in doubles (a scale, not a result). */
  frobeniusNorm(): number {
    let sum = 0;
    for (let k = 0; k < this.reHigh.length; k++) sum += this.reHigh[k] ** 2 + this.imHigh[k] ** 2;
    return Math.sqrt(sum);
  }
}

/** (a + ib)·(c + id) accumulated into (re, im). */
function multiplyAdd(re: Dd, im: Dd, ar: Dd, ai: Dd, br: Dd, bi: Dd): [Dd, Dd] {
  const { ddAddDd, ddDiffDd, ddMultDd } = dd();
  return [ddAddDd(re, ddDiffDd(ddMultDd(ar, br), ddMultDd(ai, bi))), ddAddDd(im, ddAddDd(ddMultDd(ar, bi), ddMultDd(ai, br)))];
}

/** op(A)·op(B) with op the identity or the conjugate transpose. */
export function ddMultiply(a: DdMatrix, b: DdMatrix, adjointA = false, adjointB = false): DdMatrix {
  const rows = adjointA ? a.cols : a.rows;
  const inner = adjointA ? a.rows : a.cols;
  const cols = adjointB ? b.rows : b.cols;
  if ((adjointB ? b.cols : b.rows) !== inner) throw new RangeError('ddMultiply: inner dimensions differ');
  const out = new DdMatrix(rows, cols);
  const zero: Dd = [0, 0];
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      let re = zero;
      let im = zero;
      for (let k = 0; k < inner; k++) {
        const ar = adjointA ? a.re(k, i) : a.re(i, k);
        const ai = adjointA ? negate(a.im(k, i)) : a.im(i, k);
        const br = adjointB ? b.re(j, k) : b.re(k, j);
        const bi = adjointB ? negate(b.im(j, k)) : b.im(k, j);
        [re, im] = multiplyAdd(re, im, ar, ai, br, bi);
      }
      out.set(i, j, re, im);
    }
  }
  return out;
}

function negate(x: Dd): Dd {
  return [-x[0], -x[1]];
}

/** A + s·B for a double-double scalar s. */
export function ddAddScaled(a: DdMatrix, b: DdMatrix, s: Dd): DdMatrix {
  const { ddAddDd, ddMultDd } = dd();
  const out = new DdMatrix(a.rows, a.cols);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.cols; j++) out.set(i, j, ddAddDd(a.re(i, j), ddMultDd(s, b.re(i, j))), ddAddDd(a.im(i, j), ddMultDd(s, b.im(i, j))));
  }
  return out;
}

/** Rows r0 … r1 − 1 and columns c0 … c1 − 1. */
export function ddBlock(a: DdMatrix, r0: number, r1: number, c0: number, c1: number): DdMatrix {
  const out = new DdMatrix(r1 - r0, c1 - c0);
  for (let i = r0; i < r1; i++) for (let j = c0; j < c1; j++) out.set(i - r0, j - c0, a.re(i, j), a.im(i, j));
  return out;
}

/** s·1 of size n (s a double). */
export function ddScalarIdentity(n: number, s: number): DdMatrix {
  const out = new DdMatrix(n, n);
  for (let i = 0; i < n; i++) out.reHigh[i * n + i] = s;
  return out;
}

/** Re Tr A, summed in doubles from the high and low parts. */
export function ddTrace(a: DdMatrix): number {
  let trace = 0;
  for (let i = 0; i < a.rows; i++) trace += a.reHigh[i * a.cols + i] + a.reLow[i * a.cols + i];
  return trace;
}

/** Re Tr(A·B). */
export function ddTraceProduct(a: DdMatrix, b: DdMatrix): Dd {
  const { ddAddDd, ddDiffDd, ddMultDd } = dd();
  let sum: Dd = [0, 0];
  for (let i = 0; i < a.rows; i++) {
    for (let k = 0; k < a.cols; k++) sum = ddAddDd(sum, ddDiffDd(ddMultDd(a.re(i, k), b.re(k, i)), ddMultDd(a.im(i, k), b.im(k, i))));
  }
  return sum;
}

/** U·diag(d)·U† for real d given in doubles. */
export function ddSpectral(vectors: DdMatrix, values: ArrayLike<number>): DdMatrix {
  const scaled = new DdMatrix(vectors.rows, vectors.cols);
  const { ddMultDouble2 } = dd();
  for (let i = 0; i < vectors.rows; i++) {
    for (let j = 0; j < vectors.cols; j++) scaled.set(i, j, ddMultDouble2(values[j], vectors.re(i, j)), ddMultDouble2(values[j], vectors.im(i, j)));
  }
  return ddMultiply(scaled, vectors, false, true);
}

/** U·(Γ ∘ (U†·C·U))·U† (Daleckii–Krein) with Γ given in doubles. */
export function ddDaleckiiKrein(vectors: DdMatrix, divided: (i: number, j: number) => number, c: DdMatrix): DdMatrix {
  const rotated = ddMultiply(ddMultiply(vectors, c, true), vectors);
  const { ddMultDouble2 } = dd();
  for (let i = 0; i < rotated.rows; i++) {
    for (let j = 0; j < rotated.cols; j++) {
      const g = divided(i, j);
      rotated.set(i, j, ddMultDouble2(g, rotated.re(i, j)), ddMultDouble2(g, rotated.im(i, j)));
    }
  }
  return ddMultiply(ddMultiply(vectors, rotated), vectors, false, true);
}

/** Eigenvalues (ascending, high and low parts) and eigenvectors of a Hermitian double-double matrix. */
export interface DdEigen {
  values: Dd[];
  vectors: DdMatrix;
  /**
   * ‖A·U − U·Λ‖_F + 2‖A‖_F·‖U†U − 1‖_F with room, in doubles: with U = U₀(1 + K) (polar, U₀ unitary, ‖K‖ ≤ ‖U†U − 1‖)
   * the unitary U₀ diagonalises A + E exactly for some ‖E‖_F within this (a posteriori; derived).
   */
  residual: number;
}

/** Off-diagonal entries below this share of √(a_pp·a_qq) are not rotated (relative accuracy; Demmel & Veselić 1992). */
const JACOBI_THRESHOLD = 1e-31;
const MAX_SWEEPS = 60;

/**
 * Cyclic complex Jacobi: each rotation W = D·R zeroes a_pq, D = diag(1, e^{−iφ}) making a_pq real and R the real
 * rotation with t = sign(τ)/(|τ| + √(1 + τ²)), τ = (a_qq − a_pp)/(2|a_pq|) (Golub & Van Loan, Matrix Computations,
 * §8.5). Stops when a sweep rotates nothing.
 */
export function ddHermitianEigen(input: DdMatrix): DdEigen {
  // A double eigendecomposition, made unitary in double-double, as a preconditioner: Jacobi then refines a nearly
  // diagonal matrix, a few sweeps instead of about ten. The residual is taken against the input, so correctness
  // does not depend on it.
  const start = orthonormalised(DdMatrix.from(eigh(hermitianPart(input.toDouble())).vectors));
  const { values, vectors } = jacobi(ddMultiply(ddMultiply(start, input, true), start));
  const full = ddMultiply(start, vectors);
  return { values, vectors: full, residual: eigenResidual(input, values, full) };
}

/** One Newton–Schulz step U·(3 − U†U)/2: from ‖U†U − 1‖ ≈ 1e-15 to double-double rounding (quadratic). */
function orthonormalised(u: DdMatrix): DdMatrix {
  const { ddMultDouble2, ddDiffDd } = dd();
  const gram = ddMultiply(u, u, true);
  const n = gram.rows;
  const correction = new DdMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = ddMultDouble2(-0.5, gram.re(i, j));
      const im = ddMultDouble2(-0.5, gram.im(i, j));
      correction.set(i, j, i === j ? ddDiffDd([0, 1.5], ddMultDouble2(0.5, gram.re(i, j))) : re, im);
    }
  }
  return ddMultiply(u, correction);
}

/** Cyclic Jacobi on a Hermitian double-double matrix: eigenvalues ascending and the accumulated rotations. */
function jacobi(input: DdMatrix): { values: Dd[]; vectors: DdMatrix } {
  const { ddAddDd, ddDiffDd, ddMultDd, ddDivDd, ddSqrt, ddAbs } = dd();
  const n = input.rows;
  const a = new DdMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      // Hermitian part: the diagonal real, the lower triangle the conjugate of the upper.
      if (i === j) a.set(i, i, input.re(i, i), [0, 0]);
      else if (i < j) a.set(i, j, input.re(i, j), input.im(i, j));
      else a.set(i, j, input.re(j, i), negate(input.im(j, i)));
    }
  }
  const v = new DdMatrix(n, n);
  for (let i = 0; i < n; i++) v.reHigh[i * n + i] = 1;
  const scale = input.frobeniusNorm();
  const one: Dd = [0, 1];
  for (let sweep = 0; sweep < MAX_SWEEPS; sweep++) {
    let rotated = false;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const re = a.re(p, q);
        const im = a.im(p, q);
        const size = Math.hypot(re[1], im[1]);
        const app = a.reHigh[p * n + p];
        const aqq = a.reHigh[q * n + q];
        const floor = app > 0 && aqq > 0 ? JACOBI_THRESHOLD * Math.sqrt(app * aqq) : JACOBI_THRESHOLD * scale;
        if (!(size > floor) || size < Number.MIN_VALUE * 1e20) continue;
        rotated = true;
        const modulus = ddSqrt(ddAddDd(ddMultDd(re, re), ddMultDd(im, im)));
        const cosPhi = ddDivDd(re, modulus);
        const sinPhi = ddDivDd(im, modulus);
        const tau = ddDivDd(ddDiffDd(a.re(q, q), a.re(p, p)), ddMultDd([0, 2], modulus));
        const root = ddSqrt(ddAddDd(one, ddMultDd(tau, tau)));
        const tAbs = ddDivDd(one, ddAddDd(ddAbs(tau), root));
        const t = tau[1] < 0 ? negate(tAbs) : tAbs;
        const c = ddDivDd(one, ddSqrt(ddAddDd(one, ddMultDd(t, t))));
        const s = ddMultDd(t, c);
        // W_pp = c, W_pq = s, W_qp = −s·e^{−iφ}, W_qq = c·e^{−iφ}.
        const wqpRe = negate(ddMultDd(s, cosPhi));
        const wqpIm = ddMultDd(s, sinPhi);
        const wqqRe = ddMultDd(c, cosPhi);
        const wqqIm = negate(ddMultDd(c, sinPhi));
        const columns = (m: DdMatrix) => {
          for (let k = 0; k < n; k++) {
            const xr = m.re(k, p);
            const xi = m.im(k, p);
            const yr = m.re(k, q);
            const yi = m.im(k, q);
            let [pr, pi] = multiplyAdd([0, 0], [0, 0], xr, xi, c, [0, 0]);
            [pr, pi] = multiplyAdd(pr, pi, yr, yi, wqpRe, wqpIm);
            let [qr, qi] = multiplyAdd([0, 0], [0, 0], xr, xi, s, [0, 0]);
            [qr, qi] = multiplyAdd(qr, qi, yr, yi, wqqRe, wqqIm);
            m.set(k, p, pr, pi);
            m.set(k, q, qr, qi);
          }
        };
        columns(a);
        columns(v);
        // Rows: (W†B)_pk = c·b_pk + conj(W_qp)·b_qk, (W†B)_qk = s·b_pk + conj(W_qq)·b_qk.
        for (let k = 0; k < n; k++) {
          const xr = a.re(p, k);
          const xi = a.im(p, k);
          const yr = a.re(q, k);
          const yi = a.im(q, k);
          let [pr, pi] = multiplyAdd([0, 0], [0, 0], c, [0, 0], xr, xi);
          [pr, pi] = multiplyAdd(pr, pi, wqpRe, negate(wqpIm), yr, yi);
          let [qr, qi] = multiplyAdd([0, 0], [0, 0], s, [0, 0], xr, xi);
          [qr, qi] = multiplyAdd(qr, qi, wqqRe, negate(wqqIm), yr, yi);
          a.set(p, k, pr, pi);
          a.set(q, k, qr, qi);
        }
        a.set(p, q, [0, 0], [0, 0]);
        a.set(q, p, [0, 0], [0, 0]);
        a.set(p, p, a.re(p, p), [0, 0]);
        a.set(q, q, a.re(q, q), [0, 0]);
      }
    }
    if (!rotated) break;
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => a.reHigh[i * n + i] + a.reLow[i * n + i] - (a.reHigh[j * n + j] + a.reLow[j * n + j]));
  const values = order.map((i) => a.re(i, i));
  const vectors = new DdMatrix(n, n);
  order.forEach((from, to) => {
    for (let k = 0; k < n; k++) vectors.set(k, to, v.re(k, from), v.im(k, from));
  });
  return { values, vectors };
}

/** (‖A·U − U·Λ‖_F + 2‖A‖_F·‖U†U − 1‖_F)·(1 + 1e-6), each part formed in double-double and then rounded. */
function eigenResidual(input: DdMatrix, values: Dd[], vectors: DdMatrix): number {
  const { ddDiffDd, ddMultDd } = dd();
  const n = input.rows;
  const product = ddMultiply(input, vectors);
  let residual = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = ddDiffDd(product.re(i, j), ddMultDd(vectors.re(i, j), values[j]));
      const im = ddDiffDd(product.im(i, j), ddMultDd(vectors.im(i, j), values[j]));
      residual += (re[1] + re[0]) ** 2 + (im[1] + im[0]) ** 2;
    }
  }
  const gram = ddMultiply(vectors, vectors, true);
  let defect = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = gram.re(i, j);
      const dr = i === j ? ddDiffDd(re, [0, 1]) : re;
      const di = gram.im(i, j);
      defect += (dr[1] + dr[0]) ** 2 + (di[1] + di[0]) ** 2;
    }
  }
  return (Math.sqrt(residual) + 2 * input.frobeniusNorm() * Math.sqrt(defect)) * (1 + 1e-6);
}
