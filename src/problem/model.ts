import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { HonestStatistics } from './honest-statistics.js';

/** The entropy kinds the service bounds (see the README's mathematics section). */
export type EntropyKind = 'von-neumann' | 'petz-up' | 'petz-down' | 'sandwiched-up';
export const ENTROPY_KINDS: readonly EntropyKind[] = ['von-neumann', 'petz-up', 'petz-down', 'sandwiched-up'];

/** lower ≤ Tr(operator·ρ) ≤ upper; an equality has lower === upper; a side without a bound is ∓Infinity. */
export interface LinearConstraint {
  label: string;
  operator: ComplexMatrix; // d×d Hermitian on H_A ⊗ H_B
  lower: number;
  upper: number;
  /** Enclosure [min, max] of the operator's spectrum when validation knows it cheaply (products of POVM spectra). */
  spectrum?: { min: number; max: number };
}

/** A public announcement c: Kraus operators K_{c,j}: H → H_c and the key map {Z_{c,k}} on H_c. */
export interface AnnouncementBranch {
  label: string;
  krausOperators: ComplexMatrix[];
  keyProjectors: ComplexMatrix[];
  score: number; // f(c), 0 when absent
}

/** A validated problem: every constraint already expanded to operator form on H_A ⊗ H_B. */
export interface Problem {
  dimensionA: number;
  dimensionB: number;
  /** Alice's known reduced state when the problem came with one; used for facial reduction of the feasible set. */
  sourceMarginal?: ComplexMatrix;
  constraints: LinearConstraint[];
  branches: AnnouncementBranch[];
  description?: string;
  /** Honest expected announcement statistics for finite-size key lengths (not part of the input hash). */
  honestStatistics?: HonestStatistics;
}

/** Which entropy to bound, at which Rényi order (alpha is ignored for von Neumann). */
export interface EntropyRequest {
  kind: EntropyKind;
  alpha?: number;
}
