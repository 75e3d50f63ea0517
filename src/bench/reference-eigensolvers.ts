// Reference Hermitian eigensolvers, kept to compare with `eigh` in the benchmarks and as independent second
// methods in the tests: cyclic complex Jacobi, and ml-matrix (a general-purpose library) on the real embedding.
// Neither is used by the service.
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { ascendingOrder, assertFiniteSquare, powerOfTwoScale, type HermitianEigen } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

/** Jacobi sweep limit: quadratic convergence needs about 6–10 sweeps; more means a broken input. */
const MAX_SWEEPS = 60;

/**
 * Cyclic complex Jacobi method: slow for large d (O(n³) per sweep, 6–10 sweeps) but simple and independent
 * of the QL path; the input is symmetrised first because a rounding-level non-Hermitian part would bias it.
 */
export function eighJacobi(input: ComplexMatrix): HermitianEigen {
  assertFiniteSquare(input, 'eigh');
  const n = input.rows;
  // Exact power-of-two scaling keeps the sum of squares below from overflowing or underflowing.
  const scale = powerOfTwoScale(input.re, input.im);
  if (scale === 0) return { values: new Float64Array(n), vectors: ComplexMatrix.identity(n) };
  const inv = 1 / scale;
  const ar = new Float64Array(n * n);
  const ai = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      ar[i * n + j] = 0.5 * (input.re[i * n + j] + input.re[j * n + i]) * inv;
      ai[i * n + j] = 0.5 * (input.im[i * n + j] - input.im[j * n + i]) * inv;
    }
  }
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
        // Columns: A·J and V·J with J = [[c, s], [-s·ū, c·ū]].
        rotateColumns(ar, ai, n, p, q, c, s, ur, ui);
        rotateColumns(vr, vi, n, p, q, c, s, ur, ui);
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
    values[jj] = ar[j * n + j] * scale;
    for (let k = 0; k < n; k++) {
      vectors.re[k * n + jj] = vr[k * n + j];
      vectors.im[k * n + jj] = vi[k * n + j];
    }
  }
  return { values, vectors };
}

/**
 * Reference path through ml-matrix: the real symmetric embedding M = [[Re A, −Im A], [Im A, Re A]]
 * (symmetrised exactly, since ml-matrix tests symmetry exactly) has every eigenvalue of A twice.
 * Complex eigenvectors x + iy come from real eigenvectors [x; y]; within each cluster of equal
 * eigenvalues a column-pivoted complex Gram–Schmidt picks an orthonormal basis of half the cluster
 * size, since [x; y] and [−y; x] give the same complex line. Kept for benchmarks and tests.
 * Rayleigh–Ritz within each cluster separates nearby distinct eigenvalues that fell into one cluster.
 * Limitation: a computed pair whose two copies differ by more than the cluster tolerance would be split
 * between clusters (not seen in tests); the function then throws rather than return wrong vectors.
 */
export function eighRealEmbedding(input: ComplexMatrix): HermitianEigen {
  assertFiniteSquare(input, 'eighRealEmbedding');
  const n = input.rows;
  if (n === 0) return { values: new Float64Array(0), vectors: new ComplexMatrix(0, 0) };
  const m = 2 * n;
  const rows: number[][] = [];
  for (let i = 0; i < m; i++) rows.push(new Array<number>(m));
  let norm2 = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = 0.5 * (input.re[i * n + j] + input.re[j * n + i]);
      const im = 0.5 * (input.im[i * n + j] - input.im[j * n + i]);
      rows[i][j] = re;
      rows[i + n][j + n] = re;
      rows[i][j + n] = -im;
      rows[i + n][j] = im;
      norm2 += re * re + im * im;
    }
  }
  const decomposition = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true });
  const realValues = decomposition.realEigenvalues;
  const realVectors = decomposition.eigenvectorMatrix;
  const order = Array.from({ length: m }, (_, i) => i).sort((a, b) => realValues[a] - realValues[b]);
  // Eigenvalues closer than the embedding's backward error belong to one cluster.
  const clusterTolerance = BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF * Math.sqrt(2 * norm2);
  const valuesOut: number[] = [];
  const basisRe: Float64Array[] = [];
  const basisIm: Float64Array[] = [];
  let start = 0;
  while (start < m) {
    let end = start + 1;
    while (end < m && realValues[order[end]] - realValues[order[end - 1]] <= clusterTolerance) end++;
    const wanted = Math.round((end - start) / 2);
    const clusterStart = basisRe.length;
    const candRe: Float64Array[] = [];
    const candIm: Float64Array[] = [];
    for (let c = start; c < end; c++) {
      const col = order[c];
      const xr = new Float64Array(n);
      const xi = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        xr[i] = realVectors.get(i, col);
        xi[i] = realVectors.get(i + n, col);
      }
      candRe.push(xr);
      candIm.push(xi);
    }
    for (let picked = 0; picked < wanted && basisRe.length < n; picked++) {
      // Orthogonalise every candidate against the basis so far, then take the longest.
      let best = -1;
      let bestNorm = -1;
      for (let c = 0; c < candRe.length; c++) {
        for (let pass = 0; pass < 2; pass++) projectOut(candRe[c], candIm[c], basisRe, basisIm);
        let s = 0;
        for (let i = 0; i < n; i++) s += candRe[c][i] ** 2 + candIm[c][i] ** 2;
        if (s > bestNorm) {
          bestNorm = s;
          best = c;
        }
      }
      // Exactly paired clusters always leave a candidate with squared residual ≥ 2/(wanted + 1); far
      // less means a pair was split across clusters (eigenvalue gaps near the tolerance): refuse.
      if (!(bestNorm >= 0.5 / wanted)) {
        throw new Error('eighRealEmbedding: could not extract orthonormal complex eigenvectors (eigenvalue pair split between clusters)');
      }
      const scaleBack = 1 / Math.sqrt(bestNorm);
      const vr = candRe[best].map((x) => x * scaleBack);
      const vi = candIm[best].map((x) => x * scaleBack);
      basisRe.push(vr);
      basisIm.push(vi);
      candRe.splice(best, 1);
      candIm.splice(best, 1);
      valuesOut.push(rayleighQuotient(input, vr, vi));
    }
    // Within a cluster the picked vectors span the invariant subspace but may mix nearby distinct
    // eigenvalues: Rayleigh–Ritz on that subspace separates them again.
    if (basisRe.length - clusterStart > 1) rayleighRitz(input, basisRe, basisIm, valuesOut, clusterStart);
    start = end;
  }
  const values = Float64Array.from(valuesOut);
  const perm = ascendingOrder(values);
  const vectors = new ComplexMatrix(n, n);
  const sorted = new Float64Array(n);
  for (let jj = 0; jj < n; jj++) {
    const j = perm[jj];
    sorted[jj] = values[j];
    for (let i = 0; i < n; i++) {
      vectors.re[i * n + jj] = basisRe[j][i];
      vectors.im[i * n + jj] = basisIm[j][i];
    }
  }
  return { values: sorted, vectors };
}

/** x ← x − Σ_b ⟨b, x⟩ b for the orthonormal complex vectors b. */
function projectOut(xr: Float64Array, xi: Float64Array, basisRe: Float64Array[], basisIm: Float64Array[]): void {
  const n = xr.length;
  for (let b = 0; b < basisRe.length; b++) {
    const br = basisRe[b];
    const bi = basisIm[b];
    let pr = 0;
    let pi = 0;
    for (let i = 0; i < n; i++) {
      pr += br[i] * xr[i] + bi[i] * xi[i];
      pi += br[i] * xi[i] - bi[i] * xr[i];
    }
    for (let i = 0; i < n; i++) {
      xr[i] -= pr * br[i] - pi * bi[i];
      xi[i] -= pr * bi[i] + pi * br[i];
    }
  }
}

/**
 * Replaces the orthonormal vectors basis[from..] by Ritz vectors of A on their span (eigenvectors of the
 * small projected matrix B†·A·B, found with Jacobi), and their values by the Ritz values.
 */
function rayleighRitz(a: ComplexMatrix, basisRe: Float64Array[], basisIm: Float64Array[], values: number[], from: number): void {
  const n = a.rows;
  const m = basisRe.length - from;
  // Columns B_c, then A·B_c, then P = B†·A·B.
  const abRe: Float64Array[] = [];
  const abIm: Float64Array[] = [];
  for (let c = 0; c < m; c++) {
    const xr = basisRe[from + c];
    const xi = basisIm[from + c];
    const yr = new Float64Array(n);
    const yi = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let sr = 0;
      let si = 0;
      for (let j = 0; j < n; j++) {
        // (A + A†)/2 applied to x, as everywhere in this module.
        const hr = 0.5 * (a.re[i * n + j] + a.re[j * n + i]);
        const hi = 0.5 * (a.im[i * n + j] - a.im[j * n + i]);
        sr += hr * xr[j] - hi * xi[j];
        si += hr * xi[j] + hi * xr[j];
      }
      yr[i] = sr;
      yi[i] = si;
    }
    abRe.push(yr);
    abIm.push(yi);
  }
  const projected = new ComplexMatrix(m, m);
  for (let r = 0; r < m; r++) {
    for (let c = 0; c < m; c++) {
      let sr = 0;
      let si = 0;
      for (let i = 0; i < n; i++) {
        const br = basisRe[from + r][i];
        const bi = basisIm[from + r][i];
        sr += br * abRe[c][i] + bi * abIm[c][i];
        si += br * abIm[c][i] - bi * abRe[c][i];
      }
      projected.set(r, c, sr, si);
    }
  }
  const small = eighJacobi(projected);
  const oldRe = basisRe.slice(from).map((v) => v.slice());
  const oldIm = basisIm.slice(from).map((v) => v.slice());
  for (let c = 0; c < m; c++) {
    const vr = new Float64Array(n);
    const vi = new Float64Array(n);
    for (let r = 0; r < m; r++) {
      const wr = small.vectors.re[r * m + c];
      const wi = small.vectors.im[r * m + c];
      for (let i = 0; i < n; i++) {
        vr[i] += oldRe[r][i] * wr - oldIm[r][i] * wi;
        vi[i] += oldRe[r][i] * wi + oldIm[r][i] * wr;
      }
    }
    basisRe[from + c] = vr;
    basisIm[from + c] = vi;
    values[from + c] = small.values[c];
  }
}

/** Re(x† A x) for a unit vector x (A read through its Hermitian part). */
function rayleighQuotient(a: ComplexMatrix, xr: Float64Array, xi: Float64Array): number {
  const n = xr.length;
  let s = 0;
  for (let i = 0; i < n; i++) {
    let yr = 0;
    let yi = 0;
    for (let j = 0; j < n; j++) {
      const ar = a.re[i * n + j];
      const ai = a.im[i * n + j];
      yr += ar * xr[j] - ai * xi[j];
      yi += ar * xi[j] + ai * xr[j];
    }
    s += xr[i] * yr + xi[i] * yi;
  }
  return s;
}

/** Columns p, q of an n×n matrix times J = [[c, s], [-s·ū, c·ū]] (the cyclic Jacobi reference's column step). */
function rotateColumns(re: Float64Array, im: Float64Array, n: number, p: number, q: number, c: number, s: number, ur: number, ui: number): void {
  for (let k = 0; k < n; k++) {
    const kpR = re[k * n + p];
    const kpI = im[k * n + p];
    const kqR = re[k * n + q];
    const kqI = im[k * n + q];
    // kq·ū
    const wR = kqR * ur + kqI * ui;
    const wI = kqI * ur - kqR * ui;
    re[k * n + p] = c * kpR - s * wR;
    im[k * n + p] = c * kpI - s * wI;
    re[k * n + q] = s * kpR + c * wR;
    im[k * n + q] = s * kpI + c * wI;
  }
}
