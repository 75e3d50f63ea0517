import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { traceProductReal } from '../linear-algebra/complex-matrix.js';

export interface TrialPoint {
  step: number;
  point: ComplexMatrix;
  value: number;
  gradient: ComplexMatrix;
  /** φ'(t) = ⟨∇F(x + t·d), d⟩; +∞ where F is not finite (the step left the positive definite cone). */
  slope: number;
}

/**
 * A search is skipped when even its largest possible decrease is below this share of the requested gap: F is convex,
 * so φ(t) ≥ φ(0) + t·φ'(0) and no step in [0, maxStep] lowers F by more than |φ'(0)|·maxStep (docs/convergence.md).
 */
export const NEGLIGIBLE_DECREASE_SHARE = 1e-6;

/** True when |φ'(0)|·maxStep, the convexity bound on what the search can gain, is negligible against the gap. */
export function decreaseIsNegligible(initialSlope: number, maxStep: number, gapTolerance: number): boolean {
  return Math.abs(initialSlope) * maxStep < NEGLIGIBLE_DECREASE_SHARE * gapTolerance;
}

/**
 * Minimises φ(t) = F(x + t·d) on [0, maxStep] by finding the zero of φ' (Illinois regula falsi, bisection when
 * a bracket end is not finite). Searching on the derivative keeps working after value differences fall below
 * rounding, which a search on function values does not.
 */
export function derivativeLineSearch(
  trial: (step: number) => Omit<TrialPoint, 'slope'> | null,
  direction: ComplexMatrix,
  initialSlope: number,
  maxStep: number,
  tolerance: number,
  maxEvaluations: number,
  /** The requested gap: a search that cannot gain a millionth of it returns no step without evaluating F. */
  gapTolerance = 0,
): { best: TrialPoint | null; evaluations: number } {
  if (decreaseIsNegligible(initialSlope, maxStep, gapTolerance)) return { best: null, evaluations: 0 };
  let evaluations = 0;
  const probe = (step: number): TrialPoint | null => {
    evaluations++;
    const p = trial(step);
    if (!p || !Number.isFinite(p.value)) return null;
    return { ...p, slope: traceProductReal(p.gradient, direction) };
  };
  let best: TrialPoint | null = null;
  const consider = (p: TrialPoint | null) => {
    if (p && Number.isFinite(p.slope) && (best === null || p.value < best.value)) best = p;
  };

  const end = probe(maxStep);
  if (end && end.slope <= 0) return { best: end, evaluations };
  consider(end);
  let lo = 0;
  let slopeLo = initialSlope;
  let hi = maxStep;
  let slopeHi = end ? end.slope : Infinity;
  let side = 0;
  const target = tolerance * Math.abs(initialSlope);
  while (evaluations < maxEvaluations) {
    let step: number;
    if (Number.isFinite(slopeHi)) {
      step = lo - (slopeLo * (hi - lo)) / (slopeHi - slopeLo);
      // Keep the secant point strictly inside the bracket.
      const margin = 1e-3 * (hi - lo);
      step = Math.min(Math.max(step, lo + margin), hi - margin);
    } else {
      step = 0.5 * (lo + hi);
    }
    const p = probe(step);
    if (p === null || p.slope > 0) {
      hi = step;
      slopeHi = p ? p.slope : Infinity;
      if (side === 1) slopeLo *= 0.5; // Illinois: halve the stale end so the bracket shrinks from both sides
      side = 1;
      consider(p);
    } else {
      lo = step;
      slopeLo = p.slope;
      if (side === -1 && Number.isFinite(slopeHi)) slopeHi *= 0.5;
      side = -1;
      consider(p);
    }
    if (p && Math.abs(p.slope) <= target) return { best: p, evaluations };
    if (hi - lo <= 1e-15 * maxStep) break;
  }
  return { best, evaluations };
}
