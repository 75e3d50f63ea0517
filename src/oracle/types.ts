// Public types of the semidefinite linear oracle (docs/math.md §4) and its settings.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { FieldError } from '../problem/errors.js';

/** lower ≤ Tr(operator·σ) ≤ upper; lower === upper is an equality; ±Infinity leaves a side open. operator is d×d Hermitian. */
export interface OracleConstraint {
  label: string;
  operator: ComplexMatrix;
  lower: number;
  upper: number;
}

export interface OracleSettings {
  /** Stop when (primal − dual) ≤ relativeAccuracy·(min(1, ‖G‖_F) + |primal|); in (0, 0.1]. Default 1e-7. */
  relativeAccuracy: number;
  /** Interior-point iterations before giving up with ITERATION_LIMIT; integer in [1, 10000]. Default 100. */
  maxIterations: number;
}

/**
 * Called between expensive steps (once per interior-point iteration, between the constructor's big passes, between
 * facial-reduction steps); throws to abort the computation. The oracle never catches what it throws.
 */
export type Checkpoint = () => void;

/** Constructor options: settings plus an optional checkpoint kept for every later call. */
export interface OracleOptions extends Partial<OracleSettings> {
  checkpoint?: Checkpoint;
  /**
   * Relative right-hand-side mismatch up to which an equality that depends on the others counts as implied by them
   * (default 1e-9). Only faces found numerically by exposing directions need more: their constraints agree to
   * about √u only (the square-root sensitivity of facial reduction).
   */
  impliedEqualityTolerance?: number;
  /**
   * Assemble the Schur complement from tensor-product factors when every operator is some P ⊗ Q under one
   * factorization of d and that is cheaper (default true); false forces the dense products (benchmarks, tests).
   */
  tensorStructure?: boolean;
}

/** Per-call options of `minimize`: settings for this call and a checkpoint (overrides the constructor's). */
export interface MinimizeOptions extends Partial<OracleSettings> {
  checkpoint?: Checkpoint;
}

export const DEFAULT_ORACLE_SETTINGS: Readonly<OracleSettings> = Object.freeze({
  relativeAccuracy: 1e-7,
  maxIterations: 100,
});

/**
 * OPTIMAL: gap within the requested accuracy; INFEASIBLE: Farkas certificate in `infeasibility`;
 * ITERATION_LIMIT: best iterate so far (dualBound still valid); NUMERICAL_ERROR: factorization broke down.
 */
export type OracleStatus = 'OPTIMAL' | 'INFEASIBLE' | 'ITERATION_LIMIT' | 'NUMERICAL_ERROR';

/** Farkas certificate of docs/math.md §4: y⁺, y⁻ ≥ 0, Σ(y⁺ + y⁻) = 1, violation = Σy⁺ℓ − Σy⁻u − λ_max(Σ yΓ) > 0. */
export interface InfeasibilityCertificate {
  multipliersLower: Float64Array;
  multipliersUpper: Float64Array;
  violation: number;
  dominantConstraints: string[];
}

export interface OracleResult {
  status: OracleStatus;
  /** σ ⪰ 0, Tr σ = 1, constraints met to the primal tolerance (slightly interior); null when none was found. */
  point: ComplexMatrix | null;
  /** y⁺ ≥ 0 per constraint, in the order given. */
  multipliersLower: Float64Array;
  /** y⁻ ≥ 0 per constraint, in the order given. */
  multipliersUpper: Float64Array;
  /** ⟨G, σ⟩ at the returned point (NaN without a point). */
  primalValue: number;
  /** Σy⁺ℓ − Σy⁻u + λ_min(G − Σ(y⁺ − y⁻)Γ), recomputed with eigh: a valid lower bound for any y (★). */
  dualBound: number;
  iterations: number;
  infeasibility?: InfeasibilityCertificate;
  message?: string;
}

/** Thrown for malformed oracle input; `field` is the path of the offending value. */
export class OracleInputError extends FieldError {}

/** Relative size of the anti-Hermitian part above which an operator is rejected as not Hermitian. */
export const HERMITICITY_TOLERANCE = 1e-10;

/** Validates and completes settings; errors name the field. */
export function resolveSettings(base: Readonly<OracleSettings>, override: Partial<OracleSettings> | undefined, path: string): OracleSettings {
  const settings: OracleSettings = { relativeAccuracy: base.relativeAccuracy, maxIterations: base.maxIterations };
  if (override?.relativeAccuracy !== undefined) settings.relativeAccuracy = override.relativeAccuracy;
  if (override?.maxIterations !== undefined) settings.maxIterations = override.maxIterations;
  const accuracy = settings.relativeAccuracy;
  if (typeof accuracy !== 'number' || !(accuracy > 0 && accuracy <= 0.1)) {
    throw new OracleInputError(`${path}.relativeAccuracy`, `must be a number in (0, 0.1], got ${String(accuracy)}`);
  }
  const iterations = settings.maxIterations;
  if (typeof iterations !== 'number' || !Number.isInteger(iterations) || iterations < 1 || iterations > 10000) {
    throw new OracleInputError(`${path}.maxIterations`, `must be an integer in [1, 10000], got ${String(iterations)}`);
  }
  return settings;
}

/** Checks that `matrix` is a finite Hermitian d×d matrix; errors name `field`. */
export function checkHermitian(matrix: ComplexMatrix, dimension: number, field: string): void {
  if (matrix === null || typeof matrix !== 'object' || !(matrix.re instanceof Float64Array) || !(matrix.im instanceof Float64Array)) {
    throw new OracleInputError(field, 'must be a ComplexMatrix');
  }
  if (matrix.rows !== dimension || matrix.cols !== dimension) {
    throw new OracleInputError(field, `must be ${dimension}x${dimension}, got ${matrix.rows}x${matrix.cols}`);
  }
  let norm2 = 0;
  let defect2 = 0;
  const n = dimension;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const r = matrix.re[i * n + j];
      const s = matrix.im[i * n + j];
      if (!Number.isFinite(r) || !Number.isFinite(s)) throw new OracleInputError(field, `entry (${i}, ${j}) is not finite`);
      norm2 += r * r + s * s;
      const dr = r - matrix.re[j * n + i];
      const di = s + matrix.im[j * n + i];
      defect2 += dr * dr + di * di;
    }
  }
  if (Math.sqrt(defect2) > HERMITICITY_TOLERANCE * Math.max(1, Math.sqrt(norm2))) {
    throw new OracleInputError(field, 'is not Hermitian');
  }
}
