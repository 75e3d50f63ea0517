// The line search's skip rule for negligible predicted decreases (docs/convergence.md, "Negligible line searches"),
// checked on a quadratic whose minimiser mathjs computes from the closed form t* = ⟨c − x, d⟩/⟨d, d⟩.
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import { addScaledInPlace, subtract, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { decreaseIsNegligible, derivativeLineSearch, NEGLIGIBLE_DECREASE_SHARE } from '../../src/frank-wolfe/line-search.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';
import { toMathjs } from '../linear-algebra/mathjs-bridge.js';

/** Re⟨A, B⟩ = Re Tr(A†B) from mathjs (a general-purpose library outside the project). */
function mathjsInner(a: ReturnType<typeof toMathjs>, b: ReturnType<typeof toMathjs>): number {
  const value = math.trace(math.multiply(math.ctranspose(a), b)) as unknown as number | math.Complex;
  return typeof value === 'number' ? value : value.re;
}

describe('derivativeLineSearch: negligible predicted decrease', () => {
  // φ(t) = ½‖x + t·d − c‖², a convex quadratic (elementary calculus: t* = ⟨c − x, d⟩/⟨d, d⟩).
  const rng = seededRandom(907);
  const x = randomHermitian(4, rng);
  const c = randomHermitian(4, rng);
  const d = subtract(c, x);
  addScaledInPlace(d, randomHermitian(4, rng), 0.2);
  const exact = mathjsInner(toMathjs(subtract(c, x)), toMathjs(d)) / mathjsInner(toMathjs(d), toMathjs(d));
  let calls = 0;
  const quadratic = (step: number) => {
    calls++;
    const point = x.clone();
    addScaledInPlace(point, d, step);
    const gradient = subtract(point, c);
    return { step, point, value: 0.5 * traceProductReal(gradient, gradient), gradient };
  };
  const slope0 = traceProductReal(subtract(x, c), d);

  it('returns the closed-form minimiser, unchanged by the rule, when the predicted decrease is not negligible', () => {
    const without = derivativeLineSearch(quadratic, d, slope0, 4 * exact, 1e-10, 60);
    const withRule = derivativeLineSearch(quadratic, d, slope0, 4 * exact, 1e-10, 60, 1e-9);
    expect(withRule.best!.step).toBeCloseTo(exact, 9);
    expect(withRule.best!.step).toBe(without.best!.step);
    expect(withRule.evaluations).toBe(without.evaluations);
  });

  it('returns no step and evaluates nothing when |slope|·maxStep is below the share of the requested gap', () => {
    // A search interval so short that no step in it can gain 1e-6 of a 1e-6 gap.
    const maxStep = (0.5 * NEGLIGIBLE_DECREASE_SHARE * 1e-6) / Math.abs(slope0);
    calls = 0;
    const { best, evaluations } = derivativeLineSearch(quadratic, d, slope0, maxStep, 1e-10, 60, 1e-6);
    expect(best).toBeNull();
    expect(evaluations).toBe(0);
    expect(calls).toBe(0);
    // Without a requested gap the same search still steps (the rule is opt-in and nothing else changed).
    expect(derivativeLineSearch(quadratic, d, slope0, maxStep, 1e-10, 60).best!.step).toBe(maxStep);
  });

  it('the skipped decrease is bounded by |slope|·maxStep (convexity), checked on the exact quadratic', () => {
    for (const share of [1e-3, 0.1, 0.5, 1]) {
      const maxStep = share * exact;
      const gain = quadratic(0).value - quadratic(maxStep).value;
      expect(gain).toBeGreaterThan(0);
      expect(gain).toBeLessThanOrEqual(Math.abs(slope0) * maxStep);
    }
    expect(decreaseIsNegligible(slope0, 1e-30, 1e-9)).toBe(true);
    expect(decreaseIsNegligible(slope0, exact, 1e-9)).toBe(false);
    // The boundary case from issue #7: a slope of −2e-21 on a unit step against a 1e-6 gap.
    expect(decreaseIsNegligible(-2e-21, 1, 1e-6)).toBe(true);
  });
});
