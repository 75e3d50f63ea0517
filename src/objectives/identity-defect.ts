import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

/**
 * D = Σ_j K_j†K_j − 1 (the Kraus operators' departure from trace preservation, as stored) with a bound on its
 * rounding. A gradient a·Σ_j K_j†(1 + H)K_j is split as a·1 + a·(D + Σ_j K_j†HK_j) (docs/math.md §5, "The identity
 * part"), so D is needed to an absolute accuracy far below u·‖Σ K†K‖; the bound is the deterministic one for a
 * sum of m products, γ_m·Σ|x_k y_k| with γ_m = m·u/(1 − m·u) (published: Higham, Accuracy and Stability of Numerical
 * Algorithms, 2nd ed., SIAM 2002, §3.1 — from memory), summed over the entries in Frobenius norm.
 */
export interface IdentityDefect {
  matrix: ComplexMatrix;
  /** ≥ ‖computed D − exact D‖_F for the stored Kraus operators. */
  roundingBound: number;
}

export function identityDefect(kraus: readonly ComplexMatrix[], dimension: number): IdentityDefect {
  const matrix = ComplexMatrix.zeros(dimension);
  let rows = 0;
  for (const k of kraus) rows += k.rows;
  // Each entry's real and imaginary part is a sum of 2·rows products and the −δ term.
  const terms = 2 * rows + 1;
  const gamma = (terms * UNIT_ROUNDOFF) / (1 - terms * UNIT_ROUNDOFF);
  let absoluteSquares = 0;
  for (let a = 0; a < dimension; a++) {
    for (let b = a; b < dimension; b++) {
      let re = a === b ? -1 : 0;
      let im = 0;
      let absRe = a === b ? 1 : 0;
      let absIm = 0;
      for (const k of kraus) {
        const n = k.cols;
        for (let i = 0; i < k.rows; i++) {
          const xr = k.re[i * n + a], xi = k.im[i * n + a], yr = k.re[i * n + b], yi = k.im[i * n + b];
          // conj(x)·y
          re += xr * yr;
          re += xi * yi;
          im += xr * yi;
          im -= xi * yr;
          absRe += Math.abs(xr * yr) + Math.abs(xi * yi);
          absIm += Math.abs(xr * yi) + Math.abs(xi * yr);
        }
      }
      matrix.re[a * dimension + b] = re;
      matrix.im[a * dimension + b] = im;
      matrix.re[b * dimension + a] = re;
      matrix.im[b * dimension + a] = -im;
      const copies = a === b ? 1 : 2;
      absoluteSquares += copies * (absRe * absRe + absIm * absIm);
    }
  }
  // The absolute sums are themselves rounded: (1 + γ) covers that (they only add non-negative terms).
  return { matrix, roundingBound: gamma * (1 + gamma) * Math.sqrt(absoluteSquares) };
}

