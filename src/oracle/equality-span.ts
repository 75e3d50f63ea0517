// The affine set {Tr σ = 1, Tr(Γ_i σ) = b_i (equalities)}: an orthonormal basis of span{1, Γ_i} in the
// Hilbert–Schmidt inner product, built once per problem, with the map back to the original operators.
import { hermitianInner } from './kernels.js';

/**
 * A residual norm at most this fraction of the operator's norm marks an equality operator as linearly dependent on
 * the identity and the earlier ones. Larger than rounding so that exact dependencies are caught, small enough that
 * genuinely independent operators are kept; the coefficients of kept operators then stay below ~1/this.
 */
export const DEPENDENCE_TOLERANCE = 1e-9;

/**
 * A dependent equality whose right-hand side differs from the value implied by the others by more than this
 * (relative to 1 + |b_i| + the implied value) makes the constraints inconsistent.
 */
export const CONSISTENCY_TOLERANCE = 1e-9;

/** An equality found linearly dependent on earlier ones, with the right-hand-side mismatch δ = b_i − implied value. */
export interface DependentEquality {
  constraintIndex: number;
  /** Γ_i ≈ Σ_k coefficients[k]·E_k. */
  coefficients: Float64Array;
  mismatch: number;
  consistent: boolean;
}

export class EqualitySpan {
  readonly dimension: number;
  /** Orthonormal Hermitian basis E_k (E_0 = 1/√d), as re/im arrays. */
  readonly basisRe: Float64Array[] = [];
  readonly basisIm: Float64Array[] = [];
  /** Value ⟨E_k, σ⟩ on the affine set. */
  readonly basisValues: number[] = [];
  /** E_k = Σ_j transform[k][j]·O_j with O_0 = 1 and O_j (j ≥ 1) the operator of constraint sourceIndex[j]. */
  readonly transform: Float64Array[] = [];
  /** Constraint index of O_j (−1 for the identity O_0). */
  readonly sourceIndex: number[] = [-1];
  readonly dependent: DependentEquality[] = [];

  /** `operators[i]` with `values[i]` are the equalities, `indices[i]` their constraint positions. */
  /** `checkpoint` is called between operators (Gram–Schmidt costs O(m²d²) at large d) and may throw to abort. */
  constructor(
    dimension: number,
    operators: { re: Float64Array; im: Float64Array }[],
    values: number[],
    indices: number[],
    checkpoint?: () => void,
    consistencyTolerance: number = CONSISTENCY_TOLERANCE,
  ) {
    this.dimension = dimension;
    const n = dimension;
    const identityRe = new Float64Array(n * n);
    const identityIm = new Float64Array(n * n);
    const inverseRootD = 1 / Math.sqrt(n);
    for (let i = 0; i < n; i++) identityRe[i * n + i] = inverseRootD;
    this.basisRe.push(identityRe);
    this.basisIm.push(identityIm);
    this.basisValues.push(inverseRootD);
    this.transform.push(Float64Array.of(inverseRootD));
    const workRe = new Float64Array(n * n);
    const workIm = new Float64Array(n * n);
    for (let c = 0; c < operators.length; c++) {
      checkpoint?.();
      const { re, im } = operators[c];
      workRe.set(re);
      workIm.set(im);
      const originalNorm = Math.sqrt(hermitianInner(re, im, re, im));
      const count = this.basisRe.length;
      const projection = new Float64Array(count);
      // Modified Gram–Schmidt, twice: the second pass removes what rounding left of the first.
      for (let pass = 0; pass < 2; pass++) {
        for (let k = 0; k < count; k++) {
          const h = hermitianInner(this.basisRe[k], this.basisIm[k], workRe, workIm);
          projection[k] += h;
          const eRe = this.basisRe[k];
          const eIm = this.basisIm[k];
          for (let t = 0; t < workRe.length; t++) {
            workRe[t] -= h * eRe[t];
            workIm[t] -= h * eIm[t];
          }
        }
      }
      const residual = Math.sqrt(hermitianInner(workRe, workIm, workRe, workIm));
      let implied = 0;
      for (let k = 0; k < count; k++) implied += projection[k] * this.basisValues[k];
      if (residual <= DEPENDENCE_TOLERANCE * originalNorm || originalNorm === 0) {
        const mismatch = values[c] - implied;
        this.dependent.push({
          constraintIndex: indices[c],
          coefficients: projection,
          mismatch,
          consistent: Math.abs(mismatch) <= consistencyTolerance * (1 + Math.abs(values[c]) + Math.abs(implied)),
        });
        continue;
      }
      const inverseResidual = 1 / residual;
      const eRe = new Float64Array(n * n);
      const eIm = new Float64Array(n * n);
      for (let t = 0; t < eRe.length; t++) {
        eRe[t] = workRe[t] * inverseResidual;
        eIm[t] = workIm[t] * inverseResidual;
      }
      // Coefficients over O_0..O_count: (e_new − Σ_k projection_k·T_k) / residual.
      const row = new Float64Array(count + 1);
      row[count] = inverseResidual;
      for (let k = 0; k < count; k++) {
        const tk = this.transform[k];
        for (let j = 0; j < tk.length; j++) row[j] -= projection[k] * tk[j] * inverseResidual;
      }
      this.basisRe.push(eRe);
      this.basisIm.push(eIm);
      this.basisValues.push((values[c] - implied) * inverseResidual);
      this.transform.push(row);
      this.sourceIndex.push(indices[c]);
    }
  }

  get size(): number {
    return this.basisRe.length;
  }

  /** Coefficients a_k = ⟨E_k, X⟩ of a Hermitian X. */
  coefficientsOf(re: Float64Array, im: Float64Array): Float64Array {
    const a = new Float64Array(this.size);
    for (let k = 0; k < this.size; k++) a[k] = hermitianInner(this.basisRe[k], this.basisIm[k], re, im);
    return a;
  }

  /** In place: X ← X − Σ_k a_k·E_k. */
  subtractCombination(re: Float64Array, im: Float64Array, a: ArrayLike<number>): void {
    for (let k = 0; k < this.size; k++) {
      const h = a[k];
      if (h === 0) continue;
      const eRe = this.basisRe[k];
      const eIm = this.basisIm[k];
      for (let t = 0; t < re.length; t++) {
        re[t] -= h * eRe[t];
        im[t] -= h * eIm[t];
      }
    }
  }

  /**
   * Maps weights w over the basis (Σ w_k E_k) to weights over the originals: returns the identity coefficient
   * and adds the per-constraint coefficients into `perConstraint`.
   */
  toOriginal(w: ArrayLike<number>, perConstraint: Float64Array): number {
    const columns = this.sourceIndex.length;
    const over = new Float64Array(columns);
    for (let k = 0; k < this.size; k++) {
      const tk = this.transform[k];
      for (let j = 0; j < tk.length; j++) over[j] += w[k] * tk[j];
    }
    for (let j = 1; j < columns; j++) perConstraint[this.sourceIndex[j]] += over[j];
    return over[0];
  }
}
