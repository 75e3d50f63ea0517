import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  add,
  ComplexMatrix,
  frobeniusNorm,
  hermiticityDefect,
  multiply,
  scale,
  subtract,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import {
  DIVIDED_DIFFERENCE_RELATIVE_GAP,
  dividedDifferences,
  frechetDerivative,
  powerFunction,
  spectralFunction,
  type ScalarFunction,
} from '../../src/linear-algebra/matrix-functions.js';
import { entropyDensityFunction, matrixLog, matrixPower, matrixSqrt, naturalLogFunction } from './matrix-function-helpers.js';
import { randomDensity, randomHermitian, randomIsometry, seededRandom } from '../helpers/random.js';
import { fromSpectrum } from './eigen-helpers.js';
import { fromMathjs, toMathjs } from './mathjs-bridge.js';

function relativeDistance(a: ComplexMatrix, b: ComplexMatrix): number {
  return frobeniusNorm(subtract(a, b)) / Math.max(frobeniusNorm(b), Number.MIN_VALUE);
}

/** Full-rank density operator with smallest eigenvalue bounded away from 0 (mixed with 1/d). */
function positiveDefinite(n: number, seed: number): ComplexMatrix {
  const rho = randomDensity(n, seededRandom(seed));
  return add(scale(rho, 0.8), scale(ComplexMatrix.identity(n), 0.2 / n));
}

/** Unit-Frobenius-norm random Hermitian direction. */
function direction(n: number, seed: number): ComplexMatrix {
  const h = randomHermitian(n, seededRandom(seed));
  return scale(h, 1 / frobeniusNorm(h));
}

const functions: [string, ScalarFunction][] = [
  ['x^-0.4', powerFunction(-0.4)],
  ['x^0.3', powerFunction(0.3)],
  ['x^0.5', powerFunction(0.5)],
  ['x^1.5', powerFunction(1.5)],
  ['ln x', naturalLogFunction],
  ['x ln x', entropyDensityFunction],
];

describe('Fréchet derivative (Daleckii–Krein) against central finite differences', () => {
  describe.each(functions)('%s', (_name, f) => {
    it.each([2, 3, 4, 5, 6, 7, 8])('d=%i, generic and cancellation-free divided differences', (n) => {
      const a = positiveDefinite(n, 100 + n);
      const h = direction(n, 200 + n);
      const eig = eigh(a);
      // Reference: central difference (F(A + tH) − F(A − tH))/(2t), t small against the smallest eigenvalue.
      const t = 1e-4 * eig.values[0];
      const plus = spectralFunction(eigh(add(a, scale(h, t))), f.value);
      const minus = spectralFunction(eigh(subtract(a, scale(h, t))), f.value);
      const finite = scale(subtract(plus, minus), 1 / (2 * t));
      const generic = frechetDerivative(eig, dividedDifferences(eig.values, f.value, f.derivative), h);
      const stable = frechetDerivative(eig, dividedDifferences(eig.values, f.value, f.derivative, f.difference), h);
      expect(relativeDistance(generic, finite)).toBeLessThanOrEqual(1e-6);
      expect(relativeDistance(stable, finite)).toBeLessThanOrEqual(1e-6);
      expect(hermiticityDefect(generic)).toBeLessThanOrEqual(1e-14);
    });
  });

  it('trace self-adjointness Tr[B·Df(A)[H]] = Tr[Df(A)[B]·H] (Daleckii–Krein symmetry)', () => {
    for (const [, f] of functions) {
      for (const n of [3, 6]) {
        const a = positiveDefinite(n, 300 + n);
        const b = randomHermitian(n, seededRandom(400 + n));
        const h = randomHermitian(n, seededRandom(500 + n));
        const eig = eigh(a);
        const gamma = dividedDifferences(eig.values, f.value, f.derivative);
        const left = traceProductReal(b, frechetDerivative(eig, gamma, h));
        const right = traceProductReal(frechetDerivative(eig, gamma, b), h);
        expect(Math.abs(left - right)).toBeLessThanOrEqual(1e-12 * (Math.abs(left) + 1));
      }
    }
  });

  it('non-Hermitian directions: Df(A)[H₁ + i·H₂] = Df(A)[H₁] + i·Df(A)[H₂] (linearity; general path)', () => {
    const a = positiveDefinite(6, 650);
    const h1 = randomHermitian(6, seededRandom(651));
    const h2 = randomHermitian(6, seededRandom(652));
    const mixed = new ComplexMatrix(6, 6);
    for (let k = 0; k < 36; k++) {
      mixed.re[k] = h1.re[k] - h2.im[k];
      mixed.im[k] = h1.im[k] + h2.re[k];
    }
    const f = powerFunction(0.3);
    const eig = eigh(a);
    const gamma = dividedDifferences(eig.values, f.value, f.derivative);
    const d1 = frechetDerivative(eig, gamma, h1);
    const d2 = frechetDerivative(eig, gamma, h2);
    const expected = new ComplexMatrix(6, 6);
    for (let k = 0; k < 36; k++) {
      expected.re[k] = d1.re[k] - d2.im[k];
      expected.im[k] = d1.im[k] + d2.re[k];
    }
    expect(relativeDistance(frechetDerivative(eig, gamma, mixed), expected)).toBeLessThanOrEqual(1e-13);
  });

  it('degenerate spectrum: derivative still matches finite differences', () => {
    // A with a triply repeated eigenvalue: Γ uses f' on the repeated block.
    const v = randomIsometry(5, 5, seededRandom(600));
    const a = fromSpectrum(v, [0.2, 0.2, 0.2, 0.7, 1.3]);
    const h = direction(5, 601);
    const f = powerFunction(0.5);
    const eig = eigh(a);
    const t = 1e-5;
    const finite = scale(
      subtract(spectralFunction(eigh(add(a, scale(h, t))), f.value), spectralFunction(eigh(subtract(a, scale(h, t))), f.value)),
      1 / (2 * t),
    );
    const d = frechetDerivative(eig, dividedDifferences(eig.values, f.value, f.derivative), h);
    expect(relativeDistance(d, finite)).toBeLessThanOrEqual(1e-6);
  });
});

describe('divided differences', () => {
  it('is symmetric with f′ on the diagonal', () => {
    const values = Float64Array.from([0.1, 0.5, 2]);
    const g = dividedDifferences(values, Math.log, (x) => 1 / x);
    expect(g[0]).toBe(10);
    expect(g[1 * 3 + 2]).toBe(g[2 * 3 + 1]);
    expect(g[0 * 3 + 2]).toBeCloseTo((Math.log(0.1) - Math.log(2)) / (0.1 - 2), 15);
  });

  it('nearby eigenvalues: the midpoint rule agrees with the cancellation-free quotient', () => {
    for (const gap of [1e-3, 1e-6, 1e-9, 1e-12, 1e-15]) {
      for (const [, f] of functions) {
        const values = Float64Array.from([0.37, 0.37 * (1 + gap)]);
        const generic = dividedDifferences(values, f.value, f.derivative)[1];
        const exact = dividedDifferences(values, f.value, f.derivative, f.difference)[1];
        // Either branch of the generic formula is accurate to ~1e-10 relative (see DIVIDED_DIFFERENCE_RELATIVE_GAP).
        expect(Math.abs(generic - exact)).toBeLessThanOrEqual(1e-9 * Math.abs(exact));
      }
    }
    expect(DIVIDED_DIFFERENCE_RELATIVE_GAP).toBeGreaterThan(1e-6);
    expect(DIVIDED_DIFFERENCE_RELATIVE_GAP).toBeLessThan(1e-5);
  });

  it('cancellation-free differences at extreme ratios stay finite and exact', () => {
    const f = powerFunction(1.5);
    const d = f.difference as (x: number, y: number) => number;
    // Reference: direct evaluation, exact here because there is no cancellation.
    expect(d(1e200, 1e-200)).toBe(1e200 ** 1.5 - 1e-200 ** 1.5);
    const log = naturalLogFunction.difference as (x: number, y: number) => number;
    expect(log(1e300, 1e-300)).toBeCloseTo(Math.log(1e300) - Math.log(1e-300), 12);
  });

  it('cancellation-free differences match a direct evaluation at well-separated points', () => {
    // Reference: the definition f(x) − f(y) in plain floating point, accurate when x/y is far from 1.
    for (const [, f] of functions) {
      const d = f.difference as (x: number, y: number) => number;
      expect(d(2.5, 0.3)).toBeCloseTo(f.value(2.5) - f.value(0.3), 13);
    }
  });
});

describe('matrix powers, square root and logarithm', () => {
  it.each([2, 4, 7])('A^p·A^q = A^(p+q) and A^1 = A (d=%i)', (n) => {
    const a = positiveDefinite(n, 700 + n);
    for (const [p, q] of [
      [0.3, 0.7],
      [-0.4, 1.5],
      [0.5, 0.5],
      [-1, 1],
    ]) {
      const lhs = multiply(matrixPower(a, p), matrixPower(a, q));
      const rhs = p + q === 0 ? ComplexMatrix.identity(n) : matrixPower(a, p + q);
      expect(relativeDistance(lhs, rhs)).toBeLessThanOrEqual(1e-12);
    }
    expect(relativeDistance(matrixPower(a, 1), a)).toBeLessThanOrEqual(1e-13);
  });

  it('A^-1 agrees with mathjs inv; √A with mathjs sqrtm', () => {
    const a = positiveDefinite(5, 800);
    // Reference: mathjs 15 inv (LU) and sqrtm (Denman–Beavers iteration) on complex matrices.
    expect(relativeDistance(matrixPower(a, -1), fromMathjs(math.inv(toMathjs(a))))).toBeLessThanOrEqual(1e-11);
    expect(relativeDistance(matrixSqrt(a), fromMathjs(math.sqrtm(toMathjs(a))))).toBeLessThanOrEqual(1e-11);
  });

  it('exp(log A) = A with mathjs expm, and log of a product of commuting matrices', () => {
    for (const n of [2, 4, 6]) {
      const a = positiveDefinite(n, 900 + n);
      const logA = matrixLog(a);
      // Reference: mathjs 15 expm (Padé approximation with scaling and squaring).
      expect(relativeDistance(fromMathjs(math.expm(toMathjs(logA))), a)).toBeLessThanOrEqual(1e-11);
      // log(A²) = 2·log(A) (A commutes with itself).
      expect(relativeDistance(matrixLog(multiply(a, a)), scale(logA, 2))).toBeLessThanOrEqual(1e-12);
    }
  });

  it('rank-deficient PSD: positive powers keep the kernel, √A·√A = A', () => {
    const a = randomDensity(6, seededRandom(1000), 2);
    const root = matrixSqrt(a);
    expect(relativeDistance(multiply(root, root), a)).toBeLessThanOrEqual(1e-12);
    expect(relativeDistance(multiply(matrixPower(a, 0.25), matrixPower(a, 0.75)), a)).toBeLessThanOrEqual(1e-12);
  });

  it('errors: negative power of a singular matrix, log of a singular or indefinite matrix', () => {
    const singular = randomDensity(4, seededRandom(1100), 2);
    expect(() => matrixPower(singular, -0.5)).toThrow(
      'matrixPower: exponent -0.5 ≤ 0 needs a full-rank matrix, but numerical rank is 2 of 4',
    );
    expect(() => matrixLog(singular)).toThrow('matrixLog: matrix is not positive definite (numerical rank 2 of 4)');
    expect(() => matrixPower(ComplexMatrix.diagonal([1, -1]), 0.5)).toThrow('matrixPower: matrix is not positive semidefinite');
    expect(() => matrixPower(ComplexMatrix.identity(2), Number.NaN)).toThrow('matrixPower: exponent NaN is not finite');
  });

  it('spectralFunction with the identity function rebuilds A exactly Hermitian', () => {
    const a = randomHermitian(9, seededRandom(1200));
    const rebuilt = spectralFunction(eigh(a), (x) => x);
    expect(relativeDistance(rebuilt, a)).toBeLessThanOrEqual(1e-13);
    expect(hermiticityDefect(rebuilt)).toBe(0);
  });
});
