import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { pollAtOrder } from '../linear-algebra/interruption.js';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

/**
 * D = Σ_j K_j†K_j − 1 (the Kraus operators' departure from trace preservation, as stored) with a bound on its
 * rounding. A gradient a·Σ_j K_j†(1 + H)K_j is split as a·1 + a·(D + Σ_j K_j†HK_j) (docs/math.md §5, "The identity
 * part"), so D is needed to an absolute accuracy far below u·‖Σ K†K‖ once |a| is large.
 */
export interface IdentityDefect {
  matrix: ComplexMatrix;
  /** ≥ ‖computed D − exact D‖_F for the stored Kraus operators. */
  roundingBound: number;
}

/**
 * Plain sums carry the deterministic bound γ_m·Σ|x_k y_k|, γ_m = m·u/(1 − m·u) (Higham, Accuracy and Stability of
 * Numerical Algorithms, 2nd ed., SIAM 2002, §3.1 — from memory). When |a| times that bound exceeds
 * `compensateAbove`, D is recomputed with compensated dot products (Dot2: Ogita, Rump & Oishi, SIAM J. Sci. Comput.
 * 26, 1955 (2005), Algorithm 5.3 — from memory), whose error is u·|D| + γ_m²·Σ|x_k y_k|.
 */
export function identityDefect(kraus: readonly ComplexMatrix[], dimension: number, coefficient: number, compensateAbove: number): IdentityDefect {
  let rows = 0;
  for (const k of kraus) rows += k.rows;
  // Each entry's real and imaginary part is a sum of 2·rows products and the −δ term.
  const terms = 2 * rows + 1;
  const gamma = (terms * UNIT_ROUNDOFF) / (1 - terms * UNIT_ROUNDOFF);
  const plain = defectSums(kraus, dimension, false);
  // The absolute sums are themselves rounded: (1 + γ) covers that (they only add non-negative terms).
  const absolute = (1 + gamma) * plain.absoluteNorm;
  const plainBound = gamma * absolute;
  if (Math.abs(coefficient) * plainBound <= compensateAbove) return { matrix: plain.matrix, roundingBound: plainBound };
  const compensated = defectSums(kraus, dimension, true);
  return { matrix: compensated.matrix, roundingBound: UNIT_ROUNDOFF * compensated.norm * (1 + gamma) + gamma * gamma * absolute };
}

/** Entry by entry D_ab = Σ conj(K_ia)·K_ib − δ_ab (Hermitian: a ≤ b computed, the rest mirrored). */
function defectSums(kraus: readonly ComplexMatrix[], dimension: number, compensated: boolean) {
  const matrix = ComplexMatrix.zeros(dimension);
  const re = compensated ? new CompensatedSum() : new PlainSum();
  const im = compensated ? new CompensatedSum() : new PlainSum();
  let absoluteSquares = 0;
  let squares = 0;
  for (let a = 0; a < dimension; a++) {
    // Seconds at d = 256 with compensation: the run's deadline is polled once per row.
    pollAtOrder(dimension);
    for (let b = a; b < dimension; b++) {
      re.reset(a === b ? -1 : 0);
      im.reset(0);
      let absRe = a === b ? 1 : 0;
      let absIm = 0;
      for (const k of kraus) {
        const n = k.cols;
        for (let i = 0; i < k.rows; i++) {
          const xr = k.re[i * n + a], xi = k.im[i * n + a], yr = k.re[i * n + b], yi = k.im[i * n + b];
          // conj(x)·y
          re.addProduct(xr, yr);
          re.addProduct(xi, yi);
          im.addProduct(xr, yi);
          im.addProduct(-xi, yr);
          absRe += Math.abs(xr * yr) + Math.abs(xi * yi);
          absIm += Math.abs(xr * yi) + Math.abs(xi * yr);
        }
      }
      const r = re.value();
      const m = im.value();
      matrix.re[a * dimension + b] = r;
      matrix.im[a * dimension + b] = m;
      matrix.re[b * dimension + a] = r;
      matrix.im[b * dimension + a] = -m;
      const copies = a === b ? 1 : 2;
      absoluteSquares += copies * (absRe * absRe + absIm * absIm);
      squares += copies * (r * r + m * m);
    }
  }
  return { matrix, absoluteNorm: Math.sqrt(absoluteSquares), norm: Math.sqrt(squares) };
}

class PlainSum {
  private s = 0;
  reset(start: number): void {
    this.s = start;
  }
  addProduct(x: number, y: number): void {
    this.s += x * y;
  }
  value(): number {
    return this.s;
  }
}

/** 2²⁷ + 1: Veltkamp's splitting constant for doubles. */
const SPLITTER = 134217729;

/** Dot2: TwoProduct (Dekker, with Veltkamp's split; no fused multiply-add in JavaScript) and TwoSum, errors summed apart. */
class CompensatedSum {
  private p = 0;
  private e = 0;
  reset(start: number): void {
    this.p = start;
    this.e = 0;
  }
  addProduct(x: number, y: number): void {
    const h = x * y;
    const cx = SPLITTER * x;
    const xh = cx - (cx - x);
    const xl = x - xh;
    const cy = SPLITTER * y;
    const yh = cy - (cy - y);
    const yl = y - yh;
    const r = xl * yl - (((h - xh * yh) - xl * yh) - xh * yl);
    const sum = this.p + h;
    const z = sum - this.p;
    const q = this.p - (sum - z) + (h - z);
    this.p = sum;
    this.e += q + r;
  }
  value(): number {
    return this.p + this.e;
  }
}
