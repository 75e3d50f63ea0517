// The allocation-saving kernels: same numbers as the plain forms, and the plain forms against mathjs.
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  add,
  adjoint,
  ComplexMatrix,
  directSum,
  frobeniusNorm,
  hermitianPart,
  hermitianSum,
  scale,
  scaleInPlace,
  subtract,
} from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { spectralFunction, spectralFunctionInto } from '../../src/linear-algebra/matrix-functions.js';
import { randomComplexGaussian, randomHermitian, seededRandom } from '../helpers/random.js';
import { fromMathjs, toMathjs } from './mathjs-bridge.js';

/** Bit-for-bit equality of two matrices (Object.is tells −0 from +0). */
function expectSameBits(a: ComplexMatrix, b: ComplexMatrix): void {
  expect([a.rows, a.cols]).toEqual([b.rows, b.cols]);
  for (let k = 0; k < a.re.length; k++) {
    expect(Object.is(a.re[k], b.re[k]) && Object.is(a.im[k], b.im[k])).toBe(true);
  }
}

describe('matrix storage cut from shared buffers', () => {
  it('every new matrix is zero and owns its entries (writes to one never reach another)', () => {
    const made: ComplexMatrix[] = [];
    // Sizes on both sides of the shared-buffer range, enough to cross several buffers.
    for (let t = 0; t < 600; t++) {
      const n = 1 + (t % 17);
      const m = new ComplexMatrix(n, n);
      expect(m.re.every((x) => x === 0) && m.im.every((x) => x === 0)).toBe(true);
      m.re.fill(t + 1);
      m.im.fill(-(t + 1));
      made.push(m);
    }
    made.forEach((m, t) => {
      expect(m.re.every((x) => x === t + 1) && m.im.every((x) => x === -(t + 1))).toBe(true);
    });
  });

  it('a structured clone keeps the entries (what is sent to worker threads)', () => {
    const a = randomComplexGaussian(8, 8, seededRandom(3));
    const copy = structuredClone({ rows: a.rows, cols: a.cols, re: a.re, im: a.im });
    expectSameBits(new ComplexMatrix(copy.rows, copy.cols, copy.re, copy.im), a);
  });
});

describe('one-pass and in-place forms give the same bits as the plain ones', () => {
  const rng = seededRandom(11);
  it.each([1, 2, 5, 8, 13])('A + A†, (A + A†)/2 and s·A at n = %i (mathjs 15 as the outside reference)', (n) => {
    const a = randomComplexGaussian(n, n, rng);
    const sum = hermitianSum(a);
    expectSameBits(sum, add(a, adjoint(a)));
    // Reference: mathjs add and ctranspose.
    const reference = fromMathjs(math.add(toMathjs(a), math.ctranspose(toMathjs(a))) as math.Matrix);
    expect(frobeniusNorm(subtract(sum, reference))).toBeLessThanOrEqual(1e-14 * frobeniusNorm(reference));
    const half = hermitianPart(a);
    for (let k = 0; k < n * n; k++) expect(half.re[k] === 0.5 * sum.re[k] && half.im[k] === 0.5 * sum.im[k]).toBe(true);
    expectSameBits(scaleInPlace(a.clone(), 1 / 3), scale(a, 1 / 3));
  });

  it('block spectral functions written in place equal the direct sum of separate ones', () => {
    const eigs = [3, 1, 4].map((n) => eigh(randomHermitian(n, rng)));
    const f = (x: number) => Math.exp(x) - 0.5 * x;
    const out = new ComplexMatrix(8, 8);
    let offset = 0;
    for (const e of eigs) {
      spectralFunctionInto(out, offset, e, f);
      offset += e.values.length;
    }
    expectSameBits(out, directSum(eigs.map((e) => spectralFunction(e, f))));
    expect(() => spectralFunctionInto(new ComplexMatrix(3, 3), 1, eigs[0], f)).toThrow('block outside the output');
  });
});
