// What a solve returns: statuses, certificates and the result record. Shared by the solver, the problem hash,
// the verifier, the cache, the CLI and the service; it depends on nothing but the JSON matrix shape.
import type { MatrixJson } from '../problem/json.js';

export type { MatrixJson };

/**
 * CERTIFIED: a verified bound, a final state meeting every constraint within the feasibility tolerance and
 * 0 ≤ gap ≤ requested; LIMIT_REACHED: a valid bound, the rest not (yet) met; INFEASIBLE: Farkas certificate;
 * FEASIBILITY_UNDECIDED: the data are inconsistent, or nearly so, at a level double precision cannot decide
 * (no bound); NUMERICAL_ERROR: no bound.
 */
export type SolveStatus = 'CERTIFIED' | 'LIMIT_REACHED' | 'INFEASIBLE' | 'FEASIBILITY_UNDECIDED' | 'NUMERICAL_ERROR';
/** no-progress: the certified gap stopped shrinking (floating-point margin or oracle accuracy dominates it). */
export type StopLimit = 'iterations' | 'time' | 'cancelled' | 'no-progress';
/**
 * What dominated the gap when a run stopped on no-progress: the floating-point margin of the best certificate, or
 * the linear oracle's own duality gap at its finest accuracy (each at least a quarter of the gap at the stop).
 */
export type NoProgressCause = 'margin' | 'oracle-accuracy';

/** Everything a third party needs, besides the problem, to recompute the bound. */
export interface Certificate {
  inputHash: string;
  solverVersion: string;
  /** The result-relevant settings that enter the input hash. */
  settings: { gapTolerance: number; maxIterations: number };
  entropy: string;
  alpha: number | null;
  /** Full-rank linearization point ρ' on H_A ⊗ H_B. */
  linearizationState: MatrixJson;
  /** Sandwiched-up only: τ' per announcement branch, block diagonal in that branch's key map, on H_c. */
  referenceStates?: MatrixJson[];
  /** y⁺_i ≥ 0 (attached to lower_i) and y⁻_i ≥ 0 (attached to upper_i), one per constraint. */
  multipliersLower: number[];
  multipliersUpper: number[];
  /** The bound claimed: recomputed value minus margin must not fall below it. */
  claimedBound: number;
  toleranceMargin: number;
  /**
   * Exposing directions that confine every feasible ρ to a face with no full-rank state elsewhere (signed
   * multipliers per constraint, nonzero on equalities only); verify re-checks them and recomputes the face and its
   * continuity margin (docs/faces.md). Absent when the exact reductions suffice.
   */
  faceExposures?: { multipliers: number[] }[];
  /**
   * With faceExposures: the linearization state is the full-rank point itself, lifted off the face, and the bound
   * is taken by blocks over the face and its complement (docs/faces.md, "The lifted linearization bound"); absent
   * when the state lies on the face and the continuity margin applies.
   */
  linearizationOffFace?: boolean;
}

/** The stored proof that no density operator meets the constraints (renyibound.v1.InfeasibilityCertificate). */
export interface FarkasCertificate {
  multipliersLower: number[];
  multipliersUpper: number[];
  /** Σ y⁺ℓ − Σ y⁻u − λ_max(Σ yΓ) > 0 proves no density operator meets the constraints. */
  violation: number;
  /** Labels of the constraints with the largest multipliers. */
  dominantConstraints: string[];
}

/**
 * g(s) = constant + Σ_i coefficient_i·s_i ≤ F(σ) for every state σ on the certificate's face, s_i = Tr(Γ_i σ):
 * the affine function of a von Neumann certificate, a min-tradeoff function in the statistics (docs/finite-size.md).
 */
export interface MinTradeoffFunction {
  /** In bits per round; the floating-point allowance for any |s_i| ≤ ‖Γ_i‖_F is already subtracted. */
  constant: number;
  /** One per constraint, in the problem's order (observations expanded). */
  coefficients: { label: string; coefficient: number }[];
  /** min of g over the constraint intervals (g at the solved statistics when they are equalities). */
  minimumOverIntervals: number;
  /** Where g is a valid lower bound, and on what. */
  validity: string;
}

export interface SolveResult {
  status: SolveStatus;
  limit?: StopLimit;
  /** For limit no-progress: which floating-point allowance dominated the gap. */
  noProgressCause?: NoProgressCause;
  message?: string;
  entropy: string;
  alpha: number | null;
  certifiedLowerBound: number | null;
  upperBound: number | null;
  gap: number | null;
  toleranceMargin: number | null;
  statisticalSlack: number | null;
  maxConstraintViolation: number | null;
  /** max_i violation_i/‖Γ_i‖_F of the final state (absolute for trace and positivity); null without a state. */
  relativeConstraintViolation?: number | null;
  /** The state behind upperBound meets the constraints when relativeConstraintViolation ≤ this. */
  feasibilityTolerance?: number;
  /** The bound that holds for every state: −max_c f(c) (0 without scores). */
  trivialBound?: number;
  /** True when certifiedLowerBound is trivialBound because the certificate's bound was lower (or missing). */
  trivialBoundUsed?: boolean;
  /** Remarks a reader should see (dropped inactive bounds, properties of the quantity itself). */
  notes?: string[];
  iterations: number;
  seconds: number;
  oracleSeconds: number;
  inputHash: string;
  certificate: Certificate | null;
  infeasibility?: FarkasCertificate;
  /** The final iterate (for warm starts); upperBound is F here when it meets the constraints. */
  finalState?: MatrixJson;
  /** Von Neumann results with constraints and a certificate: the certificate's affine function of the statistics. */
  minTradeoff?: MinTradeoffFunction;
}
