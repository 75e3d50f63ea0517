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
  const { leftRe, leftIm, rightRe, rightIm } = f;
  tmpRe.fill(0);
  tmpIm.fill(0);
  for (let i = 0; i < a; i++) {
    for (let j = 0; j < b; j++) {
      const target = (i * b + j) * n;
      for (let jp = 0; jp < b; jp++) {
        const qr = rightRe[j * b + jp];
        const qi = rightIm[j * b + jp];
        if (qr === 0 && qi === 0) continue;
        const source = (i * b + jp) * n;
        for (let c = 0; c < n; c++) {
          const yr = yRe[source + c];
          const yi = yIm[source + c];
          tmpRe[target + c] += qr * yr - qi * yi;
          tmpIm[target + c] += qr * yi + qi * yr;
        }
      }
    }
  }
  outRe.fill(0);
  outIm.fill(0);
  for (let i = 0; i < a; i++) {
    for (let ip = 0; ip < a; ip++) {
      const pr = leftRe[i * a + ip];
      const pi = leftIm[i * a + ip];
      if (pr === 0 && pi === 0) continue;
      for (let j = 0; j < b; j++) {
        const target = (i * b + j) * n;
        const source = (ip * b + j) * n;
        for (let c = 0; c < n; c++) {
          const tr = tmpRe[source + c];
          const ti = tmpIm[source + c];
          outRe[target + c] += pr * tr - pi * ti;
          outIm[target + c] += pr * ti + pi * tr;
        }
      }
    }
  }
}
