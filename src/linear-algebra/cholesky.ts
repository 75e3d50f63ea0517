// Cholesky factorisation A = L·L† of complex Hermitian positive-definite matrices, with solves and inverse.
import { ComplexMatrix } from './complex-matrix.js';
import { assertFiniteSquare } from './eigen.js';

/**
 * Lower-triangular L with real positive diagonal and A = L·L†, reading the Hermitian part of A
 * (its lower triangle and the conjugate of its upper triangle, averaged).
 * Throws when a pivot is not positive: A is then not positive definite (to working precision).
 */
export function choleskyFactor(a: ComplexMatrix): ComplexMatrix {
  assertFiniteSquare(a, 'choleskyFactor');
  const n = a.rows;
  const l = new ComplexMatrix(n, n);
  const lr = l.re;
  const li = l.im;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = 0; j <= i; j++) {
      const rj = j * n;
      // s = A_ij − Σ_{k<j} L_ik·conj(L_jk)
      let sr = 0.5 * (a.re[ri + j] + a.re[rj + i]);
      let si = 0.5 * (a.im[ri + j] - a.im[rj + i]);
      for (let k = 0; k < j; k++) {
        const xr = lr[ri + k];
        const xi = li[ri + k];
        const yr = lr[rj + k];
        const yi = li[rj + k];
        sr -= xr * yr + xi * yi;
        si -= xi * yr - xr * yi;
      }
      if (j === i) {
        if (!(sr > 0)) {
          throw new RangeError(`choleskyFactor: matrix is not positive definite (pivot ${i} is ${sr})`);
        }
        lr[ri + i] = Math.sqrt(sr);
      } else {
        const pivot = lr[rj + j];
        lr[ri + j] = sr / pivot;
        li[ri + j] = si / pivot;
      }
    }
  }
  return l;
}

function assertFactor(l: ComplexMatrix, caller: string): void {
  if (!l.isSquare) throw new RangeError(`${caller}: factor is ${l.rows}x${l.cols}, not square`);
  for (let i = 0; i < l.rows; i++) {
    const d = l.re[i * l.cols + i];
    if (!(d > 0)) throw new RangeError(`${caller}: factor diagonal entry ${i} is ${d}, not positive`);
  }
}

/** X with L·L†·X = B, by forward substitution with L and back substitution with L†. */
export function choleskySolve(l: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  assertFactor(l, 'choleskySolve');
  const n = l.rows;
  if (b.rows !== n) throw new RangeError(`choleskySolve: right-hand side has ${b.rows} rows, factor is ${n}x${n}`);
  const m = b.cols;
  const x = b.clone();
  const xr = x.re;
  const xi = x.im;
  const lr = l.re;
  const li = l.im;
  // Forward: row i of Y = (row i of B − Σ_{k<i} L_ik·row k of Y)/L_ii.
  for (let i = 0; i < n; i++) {
    const ri = i * m;
    for (let k = 0; k < i; k++) {
      const cr = lr[i * n + k];
      const ci = li[i * n + k];
      if (cr === 0 && ci === 0) continue;
      const rk = k * m;
      for (let j = 0; j < m; j++) {
        const yr = xr[rk + j];
        const yi = xi[rk + j];
        xr[ri + j] -= cr * yr - ci * yi;
        xi[ri + j] -= cr * yi + ci * yr;
      }
    }
    const inv = 1 / lr[i * n + i];
    for (let j = 0; j < m; j++) {
      xr[ri + j] *= inv;
      xi[ri + j] *= inv;
    }
  }
  // Backward with L†: row i of X = (row i of Y − Σ_{k>i} conj(L_ki)·row k of X)/L_ii.
  for (let i = n - 1; i >= 0; i--) {
    const ri = i * m;
    for (let k = i + 1; k < n; k++) {
      const cr = lr[k * n + i];
      const ci = -li[k * n + i];
      if (cr === 0 && ci === 0) continue;
      const rk = k * m;
      for (let j = 0; j < m; j++) {
        const yr = xr[rk + j];
        const yi = xi[rk + j];
        xr[ri + j] -= cr * yr - ci * yi;
        xi[ri + j] -= cr * yi + ci * yr;
      }
    }
    const inv = 1 / lr[i * n + i];
    for (let j = 0; j < m; j++) {
      xr[ri + j] *= inv;
      xi[ri + j] *= inv;
    }
  }
  return x;
}

/** A⁻¹ = (L·L†)⁻¹, returned exactly Hermitian. */
export function choleskyInverse(l: ComplexMatrix): ComplexMatrix {
  assertFactor(l, 'choleskyInverse');
  const n = l.rows;
  const x = choleskySolve(l, ComplexMatrix.identity(n));
  for (let i = 0; i < n; i++) {
    x.im[i * n + i] = 0;
    for (let j = 0; j < i; j++) {
      const re = 0.5 * (x.re[i * n + j] + x.re[j * n + i]);
      const im = 0.5 * (x.im[i * n + j] - x.im[j * n + i]);
      x.re[i * n + j] = re;
      x.im[i * n + j] = im;
      x.re[j * n + i] = re;
      x.im[j * n + i] = -im;
    }
  }
  return x;
}
