// Unit tests of the step helpers (line search, active set, quasi-Newton, step limits), each against a closed form
// or a general-purpose library (mathjs) rather than the solver itself.
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  addScaledInPlace,
  adjoint,
  ComplexMatrix,
  multiply,
  scale,
  subtract,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { ActiveSet } from '../../src/frank-wolfe/active-set.js';
import { decreaseIsNegligible, derivativeLineSearch, NEGLIGIBLE_DECREASE_SHARE } from '../../src/frank-wolfe/line-search.js';
import { TangentQuasiNewton } from '../../src/frank-wolfe/quasi-newton.js';
import { alongActiveIntervals, stepToEigenvalueFloor, stepToIntervalBounds } from '../../src/frank-wolfe/step-limits.js';
import type { Problem } from '../../src/problem/model.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { toMathjs } from '../linear-algebra/mathjs-bridge.js';

/** λ_min of a Hermitian matrix from mathjs (a general-purpose eigensolver outside the project). */
function mathjsSmallestEigenvalue(a: ComplexMatrix): number {
  const values = math.eigs(toMathjs(a)).values as math.Matrix;
  return Math.min(...(values.toArray() as (number | math.Complex)[]).map((v) => (typeof v === 'number' ? v : v.re)));
}

describe('derivativeLineSearch', () => {
  // φ(t) = ½‖x + t·d − c‖² has the exact minimiser t* = ⟨c − x, d⟩ / ⟨d, d⟩ (elementary calculus).
  const rng = seededRandom(71);
  const x = randomHermitian(4, rng);
  const c = randomHermitian(4, rng);
  const d = scale(subtract(c, x), 0.8);
  addScaledInPlace(d, randomHermitian(4, rng), 0.1);
  const exact = traceProductReal(subtract(c, x), d) / traceProductReal(d, d);
  const quadratic = (step: number) => {
    const point = x.clone();
    addScaledInPlace(point, d, step);
    const gradient = subtract(point, c);
    return { step, point, value: 0.5 * traceProductReal(gradient, gradient), gradient };
  };
  const slope0 = traceProductReal(subtract(x, c), d);

  it('finds the exact minimiser of a quadratic inside the interval', () => {
    const { best } = derivativeLineSearch(quadratic, d, slope0, 4 * exact, 1e-10, 60);
    expect(best!.step).toBeCloseTo(exact, 9);
  });

  it('returns the end of the interval when the minimiser lies beyond it', () => {
    const { best, evaluations } = derivativeLineSearch(quadratic, d, slope0, 0.5 * exact, 1e-10, 60);
    expect(best!.step).toBe(0.5 * exact);
    expect(evaluations).toBe(1);
  });

  it('bisects back into the domain when the far end is outside it', () => {
    // Points beyond 1.5·t* are "outside the cone" (null): the search must still converge to t*.
    const bounded = (step: number) => (step > 1.5 * exact ? null : quadratic(step));
    const { best } = derivativeLineSearch(bounded, d, slope0, 10 * exact, 1e-10, 80);
    expect(best!.step).toBeCloseTo(exact, 8);
  });

  // The skip rule for negligible predicted decreases (docs/convergence.md, "Negligible line searches"); the
  // minimiser t* = ⟨c − x, d⟩/⟨d, d⟩ recomputed with mathjs as the outside reference.
  const mathjsInner = (a: ComplexMatrix, b: ComplexMatrix) => {
    const value = math.trace(math.multiply(math.ctranspose(toMathjs(a)), toMathjs(b))) as unknown as number | math.Complex;
    return typeof value === 'number' ? value : value.re;
  };
  const mathjsMinimiser = mathjsInner(subtract(c, x), d) / mathjsInner(d, d);

  it('leaves the step unchanged, at the mathjs minimiser, when the predicted decrease is not negligible', () => {
    const without = derivativeLineSearch(quadratic, d, slope0, 4 * exact, 1e-10, 60);
    const withRule = derivativeLineSearch(quadratic, d, slope0, 4 * exact, 1e-10, 60, 1e-9);
    expect(withRule.best!.step).toBeCloseTo(mathjsMinimiser, 9);
    expect(withRule.best!.step).toBe(without.best!.step);
    expect(withRule.evaluations).toBe(without.evaluations);
  });

  it('returns no step and evaluates nothing when |slope|·maxStep is below 1e-6 of the requested gap', () => {
    const maxStep = (0.5 * NEGLIGIBLE_DECREASE_SHARE * 1e-6) / Math.abs(slope0);
    let calls = 0;
    const counted = (step: number) => (calls++, quadratic(step));
    const { best, evaluations } = derivativeLineSearch(counted, d, slope0, maxStep, 1e-10, 60, 1e-6);
    expect(best).toBeNull();
    expect(evaluations).toBe(0);
    expect(calls).toBe(0);
    // Without a requested gap the same search still steps (the rule is opt-in).
    expect(derivativeLineSearch(quadratic, d, slope0, maxStep, 1e-10, 60).best!.step).toBe(maxStep);
  });

  it('what a skipped search could gain is at most |slope|·maxStep (convexity), on the exact quadratic', () => {
    for (const share of [1e-3, 0.1, 0.5, 1]) {
      const gain = quadratic(0).value - quadratic(share * exact).value;
      expect(gain).toBeGreaterThan(0);
      expect(gain).toBeLessThanOrEqual(Math.abs(slope0) * share * exact);
    }
    expect(decreaseIsNegligible(slope0, exact, 1e-9)).toBe(false);
    // The boundary case of issue #7: a slope of −2e-21 on a unit step against a 1e-6 gap.
    expect(decreaseIsNegligible(-2e-21, 1, 1e-6)).toBe(true);
  });
});

describe('ActiveSet', () => {
  const rng = seededRandom(72);
  const atoms = [randomDensity(3, rng), randomDensity(3, rng), randomDensity(3, rng)];

  it('the away atom maximises ⟨G, a⟩ over the atoms (brute force)', () => {
    const set = new ActiveSet(atoms[0], 60, 1e-15);
    set.pairwiseStep(0, atoms[1], 0.3);
    set.pairwiseStep(0, atoms[2], 0.25);
    expect(set.size).toBe(3);
    const gradient = randomHermitian(3, rng);
    const brute = Math.max(...atoms.map((a) => traceProductReal(gradient, a)));
    expect(traceProductReal(gradient, set.awayAtom(gradient).point)).toBeCloseTo(brute, 12);
  });

  it('merging the two lightest atoms keeps the weighted sum unchanged', () => {
    const set = new ActiveSet(atoms[0], 2, 1e-15);
    const expected = atoms[0].clone();
    addScaledInPlace(expected, subtract(atoms[1], atoms[0]), 0.4);
    set.pairwiseStep(0, atoms[1], 0.4);
    const away = set.awayAtom(randomHermitian(3, rng));
    addScaledInPlace(expected, subtract(atoms[2], away.point), 0.1 * away.weight);
    set.pairwiseStep(away.index, atoms[2], 0.1 * away.weight);
    expect(set.size).toBe(2);
    // Reconstruct the iterate from the two remaining atoms through their away/weight views.
    const g1 = randomHermitian(3, rng);
    const a = set.awayAtom(g1);
    const b = set.awayAtom(scale(g1, -1));
    const rebuilt = scale(a.point, a.weight);
    addScaledInPlace(rebuilt, b.point, b.weight);
    expect(a.weight + b.weight).toBeCloseTo(1, 14);
    for (let k = 0; k < 9; k++) expect(rebuilt.re[k]).toBeCloseTo(expected.re[k], 12);
  });
});

describe('TangentQuasiNewton', () => {
  // On a quadratic with Hessian A, BFGS updates from A-conjugate steps keep every earlier secant condition
  // H·y_j = s_j (hereditary property; Nocedal & Wright, Numerical Optimization, 2nd ed., §6.1), so after n such
  // pairs H = A⁻¹ and the direction is the Newton step −A⁻¹g. A⁻¹ comes from mathjs.
  const n = 5;
  const rng = seededRandom(73);
  const b = Array.from({ length: n }, () => Array.from({ length: n }, () => rng() - 0.5));
  const hessian = math.add(math.multiply(math.transpose(b), b), math.multiply(0.5, math.identity(n))) as math.Matrix;
  const asMatrix = (v: number[]) => ComplexMatrix.diagonal(Float64Array.from(v));
  const diag = (m: ComplexMatrix) => Array.from({ length: n }, (_, i) => m.re[i * n + i]);
  const applyHessian = (v: number[]) => (math.multiply(hessian, v) as math.Matrix).toArray() as number[];

  it('reproduces the Newton step −A⁻¹g after n conjugate pairs', () => {
    const conjugate: number[][] = [];
    for (let k = 0; k < n; k++) {
      let v = Array.from({ length: n }, () => rng() - 0.5);
      for (const p of conjugate) {
        const coefficient = (math.dot(v, applyHessian(p)) as number) / (math.dot(p, applyHessian(p)) as number);
        v = v.map((x, i) => x - coefficient * p[i]);
      }
      conjugate.push(v);
    }
    const qn = new TangentQuasiNewton(n);
    for (const s of conjugate) qn.update(asMatrix(s), asMatrix(applyHessian(s)));
    const g = Array.from({ length: n }, () => rng() - 0.5);
    const newton = (math.multiply(math.inv(hessian), g) as math.Matrix).toArray() as number[];
    diag(qn.direction(asMatrix(g))).forEach((v, i) => expect(v).toBeCloseTo(-newton[i], 10));
  });

  it('satisfies the secant condition of the newest pair for arbitrary steps', () => {
    const qn = new TangentQuasiNewton(3);
    let s: number[] = [];
    for (let k = 0; k < 4; k++) {
      s = Array.from({ length: n }, () => rng() - 0.5);
      qn.update(asMatrix(s), asMatrix(applyHessian(s)));
    }
    // H·y = s for the newest pair, so direction(y) = −s.
    diag(qn.direction(asMatrix(applyHessian(s)))).forEach((v, i) => expect(v).toBeCloseTo(-s[i], 10));
  });

  it('skips pairs without positive curvature', () => {
    const qn = new TangentQuasiNewton(3);
    qn.update(asMatrix([1, 0, 0, 0, 0]), asMatrix([-1, 0, 0, 0, 0]));
    expect(qn.ready).toBe(false);
  });

  it('skips nearly orthogonal pairs (cautious update), which would inflate the direction by 1/cos∠(s, y)', () => {
    // s·y = 1e-6·‖s‖‖y‖ > 0: positive curvature, yet the pair would scale the direction along s by 1e6.
    const qn = new TangentQuasiNewton(3);
    qn.update(asMatrix([1, 0, 0, 0, 0]), asMatrix([1e-6, 1, 0, 0, 0]));
    expect(qn.ready).toBe(false);
    qn.update(asMatrix([1, 0, 0, 0, 0]), asMatrix([1e-3, 1, 0, 0, 0]));
    expect(qn.ready).toBe(true);
  });
});

describe('step limits', () => {
  const rng = seededRandom(74);

  it('stepToEigenvalueFloor stops where λ_min(x + t·d) reaches the floor (eigenvalues from mathjs)', () => {
    for (const floor of [1e-9, 1e-3]) {
      const x = randomDensity(4, rng);
      const d = randomHermitian(4, rng);
      const t = stepToEigenvalueFloor(x, eigh(x), d, floor);
      expect(Number.isFinite(t) && t > 0).toBe(true);
      const at = x.clone();
      addScaledInPlace(at, d, t);
      expect(mathjsSmallestEigenvalue(at)).toBeCloseTo(floor, 9);
      const before = x.clone();
      addScaledInPlace(before, d, 0.99 * t);
      expect(mathjsSmallestEigenvalue(before)).toBeGreaterThan(floor);
    }
  });

  it('stepToEigenvalueFloor is unbounded along a positive semidefinite direction', () => {
    const x = randomDensity(3, rng);
    expect(stepToEigenvalueFloor(x, eigh(x), randomDensity(3, rng), 1e-9)).toBe(Infinity);
  });

  it('stepToEigenvalueFloor neither overflows nor leaves the cone at the floor, whatever the direction\'s size', () => {
    // The defect of docs/convergence.md "Non-finite steps": an iterate below the floor (λ₀ ≈ λ₁ ≈ 1e-10) and a
    // quasi-Newton direction of size 4e11 overflowed the scaled eigenproblem. Checked with mathjs eigenvalues.
    for (const sizeOfDirection of [1, 4e11]) {
      const { vectors } = eigh(randomDensity(4, rng));
      const x = new ComplexMatrix(4, 4);
      [1e-10, 1.0000000409e-10, 0.4, 0.6 - 2.0000000409e-10].forEach((value, k) => {
        const v = new ComplexMatrix(4, 1);
        for (let i = 0; i < 4; i++) {
          v.re[i] = vectors.re[i * 4 + k];
          v.im[i] = vectors.im[i * 4 + k];
        }
        addScaledInPlace(x, multiply(v, adjoint(v)), value);
      });
      const d = scale(randomHermitian(4, rng), sizeOfDirection);
      const t = stepToEigenvalueFloor(x, eigh(x), d, 1e-9, 1);
      expect(Number.isFinite(t)).toBe(true);
      const at = x.clone();
      addScaledInPlace(at, d, t);
      expect(mathjsSmallestEigenvalue(at)).toBeGreaterThan(0);
    }
  });

  it('stepToEigenvalueFloor refuses a non-finite direction (step 0)', () => {
    const x = randomDensity(3, rng);
    const d = randomHermitian(3, rng);
    d.re[0] = Infinity;
    expect(stepToEigenvalueFloor(x, eigh(x), d, 1e-9)).toBe(0);
    d.re[0] = NaN;
    expect(stepToEigenvalueFloor(x, eigh(x), d, 1e-9)).toBe(0);
  });

  const intervals = (x: ComplexMatrix): Problem => {
    const g1 = randomHermitian(3, rng);
    const g2 = randomHermitian(3, rng);
    const v1 = traceProductReal(g1, x);
    const v2 = traceProductReal(g2, x);
    return {
      dimensionA: 3,
      dimensionB: 1,
      constraints: [
        { label: 'g1', operator: g1, lower: v1 - 0.2, upper: v1 + 0.1 },
        { label: 'g2', operator: g2, lower: v2 - 0.05, upper: v2 + 0.3 },
      ],
      branches: [],
    } as unknown as Problem;
  };

  it('stepToIntervalBounds stops on the first interval bound reached', () => {
    const x = randomDensity(3, rng);
    const problem = intervals(x);
    const d = randomHermitian(3, rng);
    const t = stepToIntervalBounds(problem, x, d);
    const moved = x.clone();
    addScaledInPlace(moved, d, t);
    // At t one constraint sits exactly on a bound and none is violated (plain arithmetic on the traces).
    const slack = problem.constraints.map((c) => {
      const v = traceProductReal(c.operator, moved);
      return Math.min(v - c.lower, c.upper - v);
    });
    expect(Math.min(...slack)).toBeCloseTo(0, 12);
    expect(Math.min(...slack)).toBeGreaterThan(-1e-12);
  });

  it('alongActiveIntervals returns the orthogonal projection off the blocking interval operators', () => {
    const x = randomDensity(3, rng);
    const problem = intervals(x);
    // Put x on the upper bound of g1 and push along g1: g1 blocks at once, g2 does not.
    problem.constraints[0].upper = traceProductReal(problem.constraints[0].operator, x);
    const g1 = problem.constraints[0].operator;
    const direction = randomHermitian(3, rng);
    addScaledInPlace(direction, g1, 1);
    if (traceProductReal(g1, direction) <= 0) addScaledInPlace(direction, g1, 2);
    const tangents = problem.constraints.map((c) => c.operator);
    const d = alongActiveIntervals(problem, x, direction, tangents, 1e-3);
    // Reference: d = direction − (⟨g1, direction⟩ / ⟨g1, g1⟩)·g1 (projection onto g1's orthogonal complement).
    const reference = direction.clone();
    addScaledInPlace(reference, g1, -traceProductReal(g1, direction) / traceProductReal(g1, g1));
    for (let k = 0; k < 9; k++) expect(d.re[k]).toBeCloseTo(reference.re[k], 12);
    expect(traceProductReal(g1, d)).toBeCloseTo(0, 12);
  });

  it('alongActiveIntervals projects off dependent blocking operators as mathjs pinv does', () => {
    // Four operators blocking at once, the fourth the sum of the first two: the Gram matrix is singular, and the
    // minimum-norm least-squares solve must still give the projection onto span{g}⊥ (reference: A·A⁺ from mathjs).
    const x = randomDensity(3, rng);
    const g = [randomHermitian(3, rng), randomHermitian(3, rng), randomHermitian(3, rng)];
    const sum = g[0].clone();
    addScaledInPlace(sum, g[1], 1);
    g.push(sum);
    const direction = randomHermitian(3, rng);
    for (const op of g) addScaledInPlace(direction, op, 3);
    const problem = {
      dimensionA: 3,
      dimensionB: 1,
      constraints: g.map((op, i) => ({ label: `g${i}`, operator: op, lower: -10, upper: traceProductReal(op, x) })),
      branches: [],
    } as unknown as Problem;
    for (const op of g) expect(traceProductReal(op, direction)).toBeGreaterThan(0);
    const d = alongActiveIntervals(problem, x, direction, g, 1e-3);
    // Real coordinates (Re, Im of the 9 entries) of each operator as the columns of A; P = 1 − A·pinv(A).
    const coordinates = (m: ComplexMatrix) => [...Array.from(m.re), ...Array.from(m.im)];
    const a = math.transpose(math.matrix(g.map(coordinates)));
    const projector = math.subtract(math.identity(18), math.multiply(a, math.pinv(a))) as math.Matrix;
    const reference = math.multiply(projector, coordinates(direction)) as math.Matrix;
    const ours = coordinates(d);
    (reference.toArray() as number[]).forEach((v, k) => expect(ours[k]).toBeCloseTo(v, 10));
  });
});
