// Independent references for the oracle tests: eigenvalues from mathjs, a linear program solved by enumerating
// its vertices with ml-matrix, and the CHSH operator. Nothing here uses the project's own solvers.
import * as math from 'mathjs';
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { ComplexMatrix, add, kron, scale } from '../../src/linear-algebra/complex-matrix.js';

/**
 * Eigenvalues (ascending) of a Hermitian matrix from mathjs `eigs` on its real symmetric embedding
 * [[Re H, −Im H], [Im H, Re H]], which has every eigenvalue of H twice (common practice).
 */
export function referenceEigenvalues(h: ComplexMatrix): number[] {
  const n = h.rows;
  const rows: number[][] = [];
  for (let i = 0; i < 2 * n; i++) rows.push(new Array<number>(2 * n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = 0.5 * (h.re[i * n + j] + h.re[j * n + i]);
      const im = 0.5 * (h.im[i * n + j] - h.im[j * n + i]);
      rows[i][j] = re;
      rows[i + n][j + n] = re;
      rows[i][j + n] = -im;
      rows[i + n][j] = im;
    }
  }
  const values = (math.eigs(rows, { eigenvectors: false }).values as unknown as number[]).slice().sort((a, b) => a - b);
  return values.filter((_, k) => k % 2 === 0);
}

/** Re Tr(A·B) computed entry by entry. */
export function traceOfProduct(a: ComplexMatrix, b: ComplexMatrix): number {
  const n = a.rows;
  let s = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) s += a.re[i * n + j] * b.re[j * n + i] - a.im[i * n + j] * b.im[j * n + i];
  }
  return s;
}

export interface LinearRow {
  coefficients: number[];
  lower: number;
  upper: number;
}

/**
 * min c·p over {p ≥ 0, Σp = 1, lower_i ≤ a_i·p ≤ upper_i} by enumerating every basic solution: each choice of active
 * inequalities that, with the equalities, pins p down (rank d by SVD) is solved and kept if feasible. Exponential,
 * for tiny sizes only. Returns +Infinity when no vertex is feasible.
 */
export function solveLinearProgramByVertices(c: number[], rows: LinearRow[]): { value: number; point: number[] | null } {
  const d = c.length;
  const equalities: { a: number[]; b: number }[] = [{ a: new Array<number>(d).fill(1), b: 1 }];
  const inequalities: { a: number[]; b: number }[] = [];
  for (let j = 0; j < d; j++) {
    const a = new Array<number>(d).fill(0);
    a[j] = 1;
    inequalities.push({ a, b: 0 });
  }
  for (const row of rows) {
    if (row.lower === row.upper) equalities.push({ a: row.coefficients, b: row.lower });
    else {
      if (Number.isFinite(row.lower)) inequalities.push({ a: row.coefficients, b: row.lower });
      if (Number.isFinite(row.upper)) inequalities.push({ a: row.coefficients, b: row.upper });
    }
  }
  const feasible = (p: number[]): boolean => {
    const tolerance = 1e-10;
    if (p.some((x) => x < -tolerance)) return false;
    if (Math.abs(p.reduce((s, x) => s + x, 0) - 1) > tolerance) return false;
    return rows.every((row) => {
      const v = row.coefficients.reduce((s, a, j) => s + a * p[j], 0);
      return v >= row.lower - tolerance && v <= row.upper + tolerance;
    });
  };
  let best = Infinity;
  let bestPoint: number[] | null = null;
  const chosen: number[] = [];
  const visit = (start: number): void => {
    const system = [...equalities, ...chosen.map((k) => inequalities[k])];
    if (system.length >= d) {
      const a = new Matrix(system.map((r) => r.a));
      const svd = new SingularValueDecomposition(a, { autoTranspose: true });
      if (svd.rank === d) {
        const p = svd.solve(Matrix.columnVector(system.map((r) => r.b))).to1DArray();
        const residual = system.reduce((s, r) => s + Math.abs(r.a.reduce((t, x, j) => t + x * p[j], 0) - r.b), 0);
        if (residual < 1e-9 && feasible(p)) {
          const value = c.reduce((s, x, j) => s + x * p[j], 0);
          if (value < best) {
            best = value;
            bestPoint = p;
          }
        }
      }
      return;
    }
    for (let k = start; k < inequalities.length; k++) {
      chosen.push(k);
      visit(k + 1);
      chosen.pop();
    }
  };
  visit(0);
  return { value: best, point: bestPoint };
}

export const pauliZ = ComplexMatrix.from([
  [1, 0],
  [0, -1],
]);
export const pauliX = ComplexMatrix.from([
  [0, 1],
  [1, 0],
]);

/**
 * CHSH win-probability operator W = 1/2 + (A0⊗B0 + A0⊗B1 + A1⊗B0 − A1⊗B1)/8 with A0 = Z, A1 = X,
 * B0 = (Z+X)/√2, B1 = (Z−X)/√2; its largest eigenvalue is cos²(π/8) (Tsirelson 1980).
 */
export function chshWinOperator(): ComplexMatrix {
  const b0 = scale(add(pauliZ, pauliX), Math.SQRT1_2);
  const b1 = scale(add(pauliZ, scale(pauliX, -1)), Math.SQRT1_2);
  let w = scale(ComplexMatrix.identity(4), 0.5);
  w = add(w, scale(kron(pauliZ, b0), 1 / 8));
  w = add(w, scale(kron(pauliZ, b1), 1 / 8));
  w = add(w, scale(kron(pauliX, b0), 1 / 8));
  w = add(w, scale(kron(pauliX, b1), -1 / 8));
  return w;
}

/** Σ y⁺ℓ − Σ y⁻u − λ_max(Σ (y⁺ − y⁻)Γ) with mathjs eigenvalues: positive for a valid Farkas certificate. */
export function referenceFarkasViolation(
  constraints: { operator: ComplexMatrix; lower: number; upper: number }[],
  multipliersLower: Float64Array,
  multipliersUpper: Float64Array,
): number {
  const n = constraints[0].operator.rows;
  const combination = new ComplexMatrix(n, n);
  let linear = 0;
  constraints.forEach((c, i) => {
    const y = multipliersLower[i] - multipliersUpper[i];
    if (multipliersLower[i] > 0) linear += multipliersLower[i] * c.lower;
    if (multipliersUpper[i] > 0) linear -= multipliersUpper[i] * c.upper;
    for (let t = 0; t < n * n; t++) {
      combination.re[t] += y * c.operator.re[t];
      combination.im[t] += y * c.operator.im[t];
    }
  });
  const values = referenceEigenvalues(combination);
  return linear - values[values.length - 1];
}

/** Σ y⁺ℓ − Σ y⁻u + λ_min(G − Σ (y⁺ − y⁻)Γ) with mathjs eigenvalues (the bound (★) of the dual). */
export function referenceDualBound(
  G: ComplexMatrix,
  constraints: { operator: ComplexMatrix; lower: number; upper: number }[],
  multipliersLower: Float64Array,
  multipliersUpper: Float64Array,
): number {
  const n = G.rows;
  const shifted = G.clone();
  let linear = 0;
  constraints.forEach((c, i) => {
    const y = multipliersLower[i] - multipliersUpper[i];
    if (multipliersLower[i] > 0) linear += multipliersLower[i] * c.lower;
    if (multipliersUpper[i] > 0) linear -= multipliersUpper[i] * c.upper;
    for (let t = 0; t < n * n; t++) {
      shifted.re[t] -= y * c.operator.re[t];
      shifted.im[t] -= y * c.operator.im[t];
    }
  });
  return linear + referenceEigenvalues(shifted)[0];
}
