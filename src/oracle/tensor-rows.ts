// Constraint rows that are combinations of tensor products P_j ⊗ Q_j (POVM tables, source marginals, the identity):
// the Schur complement then needs O_j·X and O_j·Z⁻¹ at n²(d_A + d_B) each instead of dense n³ products
// (docs/oracle.md, "Tensor-product rows").
import { hermitianInner } from './kernels.js';

/** Rows k = Σ_j combination[k·operators + j]·(left_j ⊗ right_j), with complex factors of sizes d_A and d_B. */
export interface TensorRows {
  dimensionA: number;
  dimensionB: number;
  leftRe: Float64Array[];
  leftIm: Float64Array[];
  rightRe: Float64Array[];
  rightIm: Float64Array[];
  /** m × p, row-major (p = number of tensor operators). */
  combination: Float64Array;
}

/** Relative Frobenius defect up to which an operator counts as an exact tensor product (rounding of the data only). */
const PRODUCT_TOLERANCE = 1e-13;
/** Relative defect up to which the rows rebuilt from the combination must match the stored rows on a probe. */
const REBUILD_TOLERANCE = 1e-11;
/** Largest Σ_j |C_kj|·‖O_j‖_F per unit row: rounding in M then stays below ~1e6·u relative. */
const MAX_COMBINATION_WEIGHT = 1e3;

export interface TensorFactors {
  leftRe: Float64Array;
  leftIm: Float64Array;
  rightRe: Float64Array;
  rightIm: Float64Array;
}

/**
 * P, Q with O = P ⊗ Q for O on C^{a·b} (n = a·b), or null when O is not a tensor product to rounding. The
 * realigned matrix R[(i,i'),(j,j')] = O[(i,j),(i',j')] has rank one exactly then (operator Schmidt rank 1); P is
 * the column of R through its largest entry and Q the scaled row.
 */
export function tensorFactors(re: Float64Array, im: Float64Array, a: number, b: number): TensorFactors | null {
  const n = a * b;
  let best = -1;
  let bestSize = 0;
  for (let t = 0; t < n * n; t++) {
    const size = re[t] * re[t] + im[t] * im[t];
    if (size > bestSize) {
      bestSize = size;
      best = t;
    }
  }
  const leftRe = new Float64Array(a * a);
  const leftIm = new Float64Array(a * a);
  const rightRe = new Float64Array(b * b);
  const rightIm = new Float64Array(b * b);
  if (best < 0) return { leftRe, leftIm, rightRe, rightIm };
  const row = Math.floor(best / n);
  const col = best % n;
  const i0 = Math.floor(row / b);
  const j0 = row % b;
  const i0p = Math.floor(col / b);
  const j0p = col % b;
  // P[i,i'] = O[(i,j0),(i',j0')]; Q[j,j'] = O[(i0,j),(i0',j')] / O[(i0,j0),(i0',j0')].
  for (let i = 0; i < a; i++) {
    for (let ip = 0; ip < a; ip++) {
      const t = (i * b + j0) * n + ip * b + j0p;
      leftRe[i * a + ip] = re[t];
      leftIm[i * a + ip] = im[t];
    }
  }
  const pr = re[best];
  const pi = im[best];
  const inverse = 1 / bestSize;
  for (let j = 0; j < b; j++) {
    for (let jp = 0; jp < b; jp++) {
      const t = (i0 * b + j) * n + i0p * b + jp;
      // (x + iy)/(pr + i·pi) = (x + iy)(pr − i·pi)/|p|².
      rightRe[j * b + jp] = (re[t] * pr + im[t] * pi) * inverse;
      rightIm[j * b + jp] = (im[t] * pr - re[t] * pi) * inverse;
    }
  }
  let defect = 0;
  let norm = 0;
  for (let i = 0; i < a; i++) {
    for (let j = 0; j < b; j++) {
      for (let ip = 0; ip < a; ip++) {
        const lr = leftRe[i * a + ip];
        const li = leftIm[i * a + ip];
        for (let jp = 0; jp < b; jp++) {
          const rr = rightRe[j * b + jp];
          const ri = rightIm[j * b + jp];
          const t = (i * b + j) * n + ip * b + jp;
          const dr = re[t] - (lr * rr - li * ri);
          const di = im[t] - (lr * ri + li * rr);
          defect += dr * dr + di * di;
          norm += re[t] * re[t] + im[t] * im[t];
        }
      }
    }
  }
  return Math.sqrt(defect) <= PRODUCT_TOLERANCE * Math.sqrt(norm) ? { leftRe, leftIm, rightRe, rightIm } : null;
}

/**
 * The factorization n = a·b (2 ≤ a, b) under which every operator is a tensor product, trying a = 2, 3, … in turn;
 * null when there is none.
 */
export function commonTensorFactors(
  operators: readonly { re: Float64Array; im: Float64Array }[],
  n: number,
): { a: number; b: number; factors: TensorFactors[] } | null {
  for (let a = 2; a * 2 <= n; a++) {
    if (n % a !== 0) continue;
    const b = n / a;
    const factors: TensorFactors[] = [];
    for (const operator of operators) {
      const f = tensorFactors(operator.re, operator.im, a, b);
      if (!f) break;
      factors.push(f);
    }
    if (factors.length === operators.length) return { a, b, factors };
  }
  return null;
}

/**
 * Whether Σ_j combination[k][j]·O_j is a safe stand-in for each stored (unit-norm) row: its coefficients, weighted
 * by ‖O_j‖_F, stay below MAX_COMBINATION_WEIGHT (Gram–Schmidt coefficients of nearly dependent operators would
 * amplify rounding in M by their square), and both sides agree on a probe H = Σ_j O_j·(j + 1)/p.
 */
export function combinationRebuildsRows(
  operators: readonly { re: Float64Array; im: Float64Array }[],
  combination: Float64Array,
  rowsRe: readonly Float64Array[],
  rowsIm: readonly Float64Array[],
): boolean {
  const p = operators.length;
  const size = rowsRe[0]?.length ?? 0;
  const norms = operators.map((o) => Math.sqrt(hermitianInner(o.re, o.im, o.re, o.im)));
  const probeRe = new Float64Array(size);
  const probeIm = new Float64Array(size);
  operators.forEach((o, j) => {
    const w = (j + 1) / (p * Math.max(norms[j], Number.MIN_VALUE));
    for (let t = 0; t < size; t++) {
      probeRe[t] += w * o.re[t];
      probeIm[t] += w * o.im[t];
    }
  });
  const onProbe = operators.map((o) => hermitianInner(o.re, o.im, probeRe, probeIm));
  const probeNorm = Math.sqrt(hermitianInner(probeRe, probeIm, probeRe, probeIm));
  for (let k = 0; k < rowsRe.length; k++) {
    let weight = 0;
    let value = 0;
    for (let j = 0; j < p; j++) {
      const c = combination[k * p + j];
      weight += Math.abs(c) * norms[j];
      value += c * onProbe[j];
    }
    const rowNorm = Math.sqrt(hermitianInner(rowsRe[k], rowsIm[k], rowsRe[k], rowsIm[k]));
    if (!(weight <= MAX_COMBINATION_WEIGHT * rowNorm)) return false;
    const stored = hermitianInner(rowsRe[k], rowsIm[k], probeRe, probeIm);
    if (!(Math.abs(stored - value) <= REBUILD_TOLERANCE * weight * probeNorm)) return false;
  }
  return true;
}

/**
 * out = (P ⊗ Q)·Y for Y n×n (n = a·b), complex; tmp is n×n scratch. Q acts on the second factor first, then P:
 * n²·(a + b) complex products instead of n³.
 */
export function applyTensorLeft(
  f: TensorFactors,
  a: number,
  b: number,
  yRe: Float64Array,
  yIm: Float64Array,
  tmpRe: Float64Array,
  tmpIm: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  const n = a * b;
  // tmp[(i,j),c] = Σ_j' Q[j,j']·Y[(i,j'),c]; out[i,(j,c)] = Σ_i' P[i,i']·tmp[i',(j,c)].
  applyFactor(f.rightRe, f.rightIm, b, a, n, yRe, yIm, tmpRe, tmpIm);
  applyFactor(f.leftRe, f.leftIm, a, 1, b * n, tmpRe, tmpIm, outRe, outIm);
}

/** A factor with at most this share of nonzero entries is applied by row updates over its nonzeros only. */
const SPARSE_FACTOR_DENSITY = 0.25;

/**
 * out[(i,j),c] = Σ_k F[j,k]·in[(i,k),c] for i < blocks, j, k < size, c < width (F size×size, complex, row-major).
 * Dense factors run as dot products over k in 2×2 blocks of (j, c), so each loaded entry serves two multiply–adds
 * and the sums stay in registers (row updates over c would load and store out once per k, several times slower).
 * Sparse factors (identities, projectors in the computational basis) update rows over their nonzeros only. Both
 * sum over k in increasing order.
 */
function applyFactor(
  fRe: Float64Array,
  fIm: Float64Array,
  size: number,
  blocks: number,
  width: number,
  inRe: Float64Array,
  inIm: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
): void {
  let nonzeros = 0;
  for (let t = 0; t < size * size; t++) if (fRe[t] !== 0 || fIm[t] !== 0) nonzeros++;
  if (nonzeros <= SPARSE_FACTOR_DENSITY * size * size) {
    // Row updates over the nonzeros of F.
    outRe.fill(0, 0, blocks * size * width);
    outIm.fill(0, 0, blocks * size * width);
    for (let i = 0; i < blocks; i++) {
      const base = i * size * width;
      for (let j = 0; j < size; j++) {
        const target = base + j * width;
        for (let k = 0; k < size; k++) {
          const qr = fRe[j * size + k];
          const qi = fIm[j * size + k];
          if (qr === 0 && qi === 0) continue;
          const source = base + k * width;
          for (let c = 0; c < width; c++) {
            const yr = inRe[source + c];
            const yi = inIm[source + c];
            outRe[target + c] += qr * yr - qi * yi;
            outIm[target + c] += qr * yi + qi * yr;
          }
        }
      }
    }
    return;
  }
  for (let i = 0; i < blocks; i++) {
    const base = i * size * width;
    for (let j = 0; j < size; j += 2) {
      const j1 = j + 1 < size ? j + 1 : j;
      const r0 = base + j * width;
      const r1 = base + j1 * width;
      for (let c = 0; c < width; c += 2) {
        const c1 = c + 1 < width ? c + 1 : c;
        let s00r = 0;
        let s00i = 0;
        let s01r = 0;
        let s01i = 0;
        let s10r = 0;
        let s10i = 0;
        let s11r = 0;
        let s11i = 0;
        for (let k = 0; k < size; k++) {
          const f0r = fRe[j * size + k];
          const f0i = fIm[j * size + k];
          const f1r = fRe[j1 * size + k];
          const f1i = fIm[j1 * size + k];
          const source = base + k * width;
          const y0r = inRe[source + c];
          const y0i = inIm[source + c];
          const y1r = inRe[source + c1];
          const y1i = inIm[source + c1];
          s00r += f0r * y0r - f0i * y0i;
          s00i += f0r * y0i + f0i * y0r;
          s01r += f0r * y1r - f0i * y1i;
          s01i += f0r * y1i + f0i * y1r;
          s10r += f1r * y0r - f1i * y0i;
          s10i += f1r * y0i + f1i * y0r;
          s11r += f1r * y1r - f1i * y1i;
          s11i += f1r * y1i + f1i * y1r;
        }
        outRe[r0 + c] = s00r;
        outIm[r0 + c] = s00i;
        outRe[r0 + c1] = s01r;
        outIm[r0 + c1] = s01i;
        outRe[r1 + c] = s10r;
        outIm[r1 + c] = s10i;
        outRe[r1 + c1] = s11r;
        outIm[r1 + c1] = s11i;
      }
    }
  }
}
