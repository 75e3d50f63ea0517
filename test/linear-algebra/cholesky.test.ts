import * as math from 'mathjs';
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import {
  add,
  columns,
  ComplexMatrix,
  frobeniusNorm,
  multiply,
  multiplyAdjointRight,
  scale,
  subtract,
} from '../../src/linear-algebra/complex-matrix.js';
import { choleskyFactor, choleskyInverse, choleskySolve } from '../../src/linear-algebra/cholesky.js';
import { randomComplexGaussian, randomDensity, seededRandom } from '../helpers/random.js';
import { fromMathjs, toMathjs } from './mathjs-bridge.js';

function relativeDistance(a: ComplexMatrix, b: ComplexMatrix): number {
  return frobeniusNorm(subtract(a, b)) / frobeniusNorm(b);
}

/** Well-conditioned Hermitian PD matrix: a density operator mixed with 1/n. */
function positiveDefinite(n: number, seed: number): ComplexMatrix {
  return add(scale(randomDensity(n, seededRandom(seed)), 0.7), scale(ComplexMatrix.identity(n), 0.3 / n));
}

describe('choleskyFactor', () => {
  it.each([1, 2, 3, 6, 10, 25])('A = L·L† with L lower triangular and positive real diagonal (n=%i)', (n) => {
    const a = positiveDefinite(n, 10 + n);
    const l = choleskyFactor(a);
    expect(relativeDistance(multiplyAdjointRight(l, l), a)).toBeLessThanOrEqual(1e-14);
    for (let i = 0; i < n; i++) {
      expect(l.re[i * n + i]).toBeGreaterThan(0);
      expect(l.im[i * n + i]).toBe(0);
      for (let j = i + 1; j < n; j++) {
        expect(l.re[i * n + j]).toBe(0);
        expect(l.im[i * n + j]).toBe(0);
      }
    }
  });

  it('matches ml-matrix CholeskyDecomposition on a real symmetric matrix', () => {
    const rng = seededRandom(99);
    const g = new ComplexMatrix(6, 6);
    for (let k = 0; k < 36; k++) g.re[k] = rng() - 0.5;
    const a = add(multiplyAdjointRight(g, g), ComplexMatrix.identity(6));
    const rows = Array.from({ length: 6 }, (_, i) => Array.from(a.re.slice(i * 6, i * 6 + 6)));
    // Reference: ml-matrix's real Cholesky (the factor with positive diagonal is unique).
    const reference = new CholeskyDecomposition(new Matrix(rows)).lowerTriangularMatrix;
    const l = choleskyFactor(a);
    for (let i = 0; i < 6; i++) {
      for (let j = 0; j < 6; j++) expect(Math.abs(l.re[i * 6 + j] - reference.get(i, j))).toBeLessThanOrEqual(1e-14);
    }
  });

  it('rejects matrices that are not positive definite, with the failing pivot', () => {
    expect(() => choleskyFactor(ComplexMatrix.diagonal([2, -1, 3]))).toThrow(
      'choleskyFactor: matrix is not positive definite (pivot 1 is -1)',
    );
    expect(() => choleskyFactor(ComplexMatrix.zeros(2))).toThrow('choleskyFactor: matrix is not positive definite (pivot 0 is 0)');
    // Rank-2 density operator on C^4: a pivot reaches rounding level or below zero.
    expect(() => choleskyFactor(scale(randomDensity(4, seededRandom(5), 2), 1))).toThrow(/not positive definite/);
    expect(() => choleskyFactor(new ComplexMatrix(2, 3))).toThrow('choleskyFactor: matrix is 2x3, not square');
    const bad = ComplexMatrix.identity(2);
    bad.im[1] = Number.NaN;
    expect(() => choleskyFactor(bad)).toThrow('choleskyFactor: entry (0, 1) is not finite (NaN)');
  });
});

describe('choleskySolve and choleskyInverse', () => {
  it.each([1, 3, 8, 20])('solve agrees with mathjs lusolve on complex right-hand sides (n=%i)', (n) => {
    const a = positiveDefinite(n, 200 + n);
    const b = randomComplexGaussian(n, 3, seededRandom(300 + n));
    const x = choleskySolve(choleskyFactor(a), b);
    // Reference: mathjs 15 lusolve (LU with partial pivoting) on the complex system.
    // lusolve takes one right-hand side at a time; reuse one LU factorisation for the three columns.
    const lu = math.lup(toMathjs(a));
    const reference = new ComplexMatrix(n, 3);
    for (let c = 0; c < 3; c++) {
      const column = fromMathjs(math.lusolve(lu, toMathjs(columns(b, c, c + 1))) as math.Matrix);
      for (let i = 0; i < n; i++) reference.set(i, c, column.re[i], column.im[i]);
    }
    expect(relativeDistance(x, reference)).toBeLessThanOrEqual(1e-12);
    expect(relativeDistance(multiply(a, x), b)).toBeLessThanOrEqual(1e-13);
  });

  it.each([2, 5, 12])('inverse agrees with mathjs inv and A·A⁻¹ = 1 (n=%i)', (n) => {
    const a = positiveDefinite(n, 400 + n);
    const inverse = choleskyInverse(choleskyFactor(a));
    // Reference: mathjs 15 inv.
    expect(relativeDistance(inverse, fromMathjs(math.inv(toMathjs(a))))).toBeLessThanOrEqual(1e-12);
    expect(frobeniusNorm(subtract(multiply(a, inverse), ComplexMatrix.identity(n)))).toBeLessThanOrEqual(1e-12);
  });

  it('input checks', () => {
    const l = choleskyFactor(positiveDefinite(3, 1));
    expect(() => choleskySolve(l, new ComplexMatrix(2, 1))).toThrow('choleskySolve: right-hand side has 2 rows, factor is 3x3');
    expect(() => choleskySolve(new ComplexMatrix(2, 3), new ComplexMatrix(2, 1))).toThrow('choleskySolve: factor is 2x3, not square');
    expect(() => choleskyInverse(ComplexMatrix.diagonal([1, 0]))).toThrow('choleskyInverse: factor diagonal entry 1 is 0, not positive');
  });
});
