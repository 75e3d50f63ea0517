// The terms of a certified bound, as the solver claims them and the verifier recomputes them.

/** Every term of LB = F(ρ') − ⟨∇F, ρ'⟩ + Σy⁺ℓ − Σy⁻u + λ_min(∇F − Σ yΓ) [+ τ terms] − margin. */
export interface BoundBreakdown {
  objectiveValue: number;
  /** ⟨∇F(ρ'), ρ'⟩ (sandwiched-up: jointly with ⟨∇_τF, τ'⟩), by Euler's identity for homogeneous functions. */
  gradientInnerProduct: number;
  dualConstant: number;
  /** λ_min(∇F − Σ yΓ); for a point lifted off a face, the block bound that replaces it (docs/faces.md). */
  smallestEigenvalue: number;
  /** Sandwiched-up: min over blocks λ_min(∇_τF); 0 otherwise. */
  referenceTerm: number;
  /** Floating-point allowance (a conservative estimate, not interval arithmetic). */
  margin: number;
  /**
   * The part of the margin for the branch outputs' conditioning: the Weyl charge, or less when the curvature of F on
   * the smallest eigenvectors of ∇F − Σ yΓ shows that those errors do not reach λ_min (docs/convergence.md).
   */
  conditioningCharge: number;
  lowerBound: number;
  /** Σ (y⁺ + y⁻)·(upper − lower)/2: what the statistical tolerance intervals cost the bound. */
  statisticalSlack: number;
}
