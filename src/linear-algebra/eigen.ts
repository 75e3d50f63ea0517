import { ComplexMatrix, hermitianPart } from './complex-matrix.js';

/** Eigendecomposition A = V·diag(values)·V† of a Hermitian matrix; values ascending, eigenvectors in columns. */
export interface HermitianEigen {
  values: Float64Array;
  vectors: ComplexMatrix;
}

const MAX_SWEEPS = 60;

/**
 * Cyclic complex Jacobi method: slow for large d but accurate to high relative precision;
 * the input is symmetrised first because a rounding-level non-Hermitian part would bias it.
 */
export function eighJacobi(input: ComplexMatrix): HermitianEigen {
  if (!input.isSquare) throw new RangeError(`eigh: matrix is ${input.rows}x${input.cols}, not square`);
  const n = input.rows;
  const a = hermitianPart(input);
  const ar = a.re;
  const ai = a.im;
  const v = ComplexMatrix.identity(n);
  const vr = v.re;
  const vi = v.im;
  let total = 0;
  for (let k = 0; k < ar.length; k++) total += ar[k] * ar[k] + ai[k] * ai[k];
  const target = (Number.EPSILON * Number.EPSILON * total) / 4;
  for (let sweep = 0; sweep < MAX_SWEEPS; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) off += ar[p * n + q] ** 2 + ai[p * n + q] ** 2;
    }
    if (off <= target) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const xr = ar[p * n + q];
        const xi = ai[p * n + q];
        const r = Math.hypot(xr, xi);
        if (r === 0) continue;
        // Phase u = A_pq/|A_pq| makes the pair real; then a real Jacobi rotation (c, s) zeroes it.
        const ur = xr / r;
        const ui = xi / r;
        const app = ar[p * n + p];
        const aqq = ar[q * n + q];
        const theta = (aqq - app) / (2 * r);
        const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        // Columns: A·J with J = [[c, s], [-s·ū, c·ū]].
        for (let k = 0; k < n; k++) {
          const kpR = ar[k * n + p];
          const kpI = ai[k * n + p];
          const kqR = ar[k * n + q];
          const kqI = ai[k * n + q];
          // kq·ū
          const wR = kqR * ur + kqI * ui;
          const wI = kqI * ur - kqR * ui;
          ar[k * n + p] = c * kpR - s * wR;
          ai[k * n + p] = c * kpI - s * wI;
          ar[k * n + q] = s * kpR + c * wR;
          ai[k * n + q] = s * kpI + c * wI;
          const vpR = vr[k * n + p];
          const vpI = vi[k * n + p];
          const vqR = vr[k * n + q];
          const vqI = vi[k * n + q];
          const zR = vqR * ur + vqI * ui;
          const zI = vqI * ur - vqR * ui;
          vr[k * n + p] = c * vpR - s * zR;
          vi[k * n + p] = c * vpI - s * zI;
          vr[k * n + q] = s * vpR + c * zR;
          vi[k * n + q] = s * vpI + c * zI;
        }
        // Rows: J†·(A·J); row p ← c·row_p − s·u·row_q, row q ← s·row_p + c·u·row_q.
        for (let k = 0; k < n; k++) {
          const pkR = ar[p * n + k];
          const pkI = ai[p * n + k];
          const qkR = ar[q * n + k];
          const qkI = ai[q * n + k];
          const wR = qkR * ur - qkI * ui;
          const wI = qkI * ur + qkR * ui;
          ar[p * n + k] = c * pkR - s * wR;
          ai[p * n + k] = c * pkI - s * wI;
          ar[q * n + k] = s * pkR + c * wR;
          ai[q * n + k] = s * pkI + c * wI;
        }
        ar[p * n + q] = 0;
        ai[p * n + q] = 0;
        ar[q * n + p] = 0;
        ai[q * n + p] = 0;
        ai[p * n + p] = 0;
        ai[q * n + q] = 0;
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => ar[i * n + i] - ar[j * n + j]);
  const values = new Float64Array(n);
  const vectors = new ComplexMatrix(n, n);
  for (let jj = 0; jj < n; jj++) {
    const j = order[jj];
    values[jj] = ar[j * n + j];
    for (let k = 0; k < n; k++) {
      vectors.re[k * n + jj] = vr[k * n + j];
      vectors.im[k * n + jj] = vi[k * n + j];
    }
  }
  return { values, vectors };
}

/** The project's Hermitian eigensolver. */
export function eigh(a: ComplexMatrix): HermitianEigen {
  return eighJacobi(a);
}
