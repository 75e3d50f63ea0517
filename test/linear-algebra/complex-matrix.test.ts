import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  ComplexMatrix,
  frobeniusNorm,
  frobeniusNormSafe,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  scale,
  subtract,
} from '../../src/linear-algebra/complex-matrix.js';
import { randomComplexGaussian, seededRandom, type RandomSource } from '../helpers/random.js';
import { fromMathjs, toMathjs } from './mathjs-bridge.js';

/** Complex Gaussian matrix with about 60% exact zeros (Kraus operators are often sparse). */
function sparse(rows: number, cols: number, rng: RandomSource): ComplexMatrix {
  const m = randomComplexGaussian(rows, cols, rng);
  for (let k = 0; k < rows * cols; k++) {
    if (rng() < 0.6) {
      m.re[k] = 0;
      m.im[k] = 0;
    }
  }
  return m;
}

function adjointOf(m: ComplexMatrix): math.Matrix {
  return math.ctranspose(toMathjs(m)) as math.Matrix;
}

describe('complex products against mathjs', () => {
  const shapes: [number, number, number][] = [
    [1, 1, 1],
    [2, 3, 4],
    [5, 5, 5],
    [7, 2, 9],
    [16, 16, 16],
    [3, 11, 1],
  ];
  it.each(shapes)('A·B, A·B†, A†·B for %i×%i times %i-column operands (dense and sparse)', (n, p, m) => {
    const rng = seededRandom(n * 100 + p * 10 + m);
    for (const make of [randomComplexGaussian, sparse]) {
      const a = make(n, p, rng);
      const b = make(p, m, rng);
      const bRowsM = make(m, p, rng);
      const aRowsP = make(p, n, rng);
      // Reference: mathjs 15 multiply and ctranspose on complex matrices.
      const ab = fromMathjs(math.multiply(toMathjs(a), toMathjs(b)) as math.Matrix);
      const abAdj = fromMathjs(math.multiply(toMathjs(a), adjointOf(bRowsM)) as math.Matrix);
      const aAdjB = fromMathjs(math.multiply(adjointOf(aRowsP), toMathjs(b)) as math.Matrix);
      expect(frobeniusNorm(subtract(multiply(a, b), ab))).toBeLessThanOrEqual(1e-13 * (1 + frobeniusNorm(ab)));
      expect(frobeniusNorm(subtract(multiplyAdjointRight(a, bRowsM), abAdj))).toBeLessThanOrEqual(1e-13 * (1 + frobeniusNorm(abAdj)));
      expect(frobeniusNorm(subtract(multiplyAdjointLeft(aRowsP, b), aAdjB))).toBeLessThanOrEqual(1e-13 * (1 + frobeniusNorm(aAdjB)));
    }
  });

  it('shape errors are unchanged', () => {
    expect(() => multiply(new ComplexMatrix(2, 3), new ComplexMatrix(2, 3))).toThrow('multiply: 2x3 times 2x3');
    expect(() => multiplyAdjointRight(new ComplexMatrix(2, 3), new ComplexMatrix(2, 2))).toThrow('multiplyAdjointRight: 2x3 times (2x2)†');
    expect(() => multiplyAdjointLeft(new ComplexMatrix(2, 3), new ComplexMatrix(3, 3))).toThrow('multiplyAdjointLeft: (2x3)† times 3x3');
  });
});

describe('frobeniusNormSafe', () => {
  it('agrees with the plain norm in range and survives overflow and underflow', () => {
    const a = randomComplexGaussian(6, 4, seededRandom(1));
    const plain = frobeniusNorm(a);
    expect(frobeniusNormSafe(a)).toBe(plain);
    for (const s of [1e-300, 1e-170, 1e170, 1e300]) {
      expect(Math.abs(frobeniusNormSafe(scale(a, s)) / (s * plain) - 1)).toBeLessThanOrEqual(1e-14);
    }
    expect(frobeniusNormSafe(new ComplexMatrix(3, 3))).toBe(0);
  });
});
