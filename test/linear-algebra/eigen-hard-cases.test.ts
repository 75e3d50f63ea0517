import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, directSum, hermitianPart, kron } from '../../src/linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../../src/linear-algebra/eigen.js';
import { eighJacobi } from '../../src/bench/reference-eigensolvers.js';
import { randomDensity, randomHermitian, randomIsometry, seededRandom } from '../helpers/random.js';
import { fromSpectrum, orthonormalityDefect, relativeResidual } from './eigen-helpers.js';

const ACCURACY = 1e-12;

/** Wilkinson's W⁺_{2m+1}: diagonal |m−i|, unit off-diagonals; its large eigenvalues come in nearly equal pairs. */
function wilkinson(m: number): ComplexMatrix {
  const n = 2 * m + 1;
  const w = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    w.re[i * n + i] = Math.abs(m - i);
    if (i + 1 < n) {
      w.re[i * n + i + 1] = 1;
      w.re[(i + 1) * n + i] = 1;
    }
  }
  return w;
}

describe('hard cases for the eigensolver', () => {
  it('Wilkinson W⁺21: nearly equal eigenvalue pairs, orthonormal vectors, agreement with Jacobi', () => {
    const w = wilkinson(10);
    const e = eigh(w);
    expect(relativeResidual(w, e)).toBeLessThanOrEqual(ACCURACY);
    expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
    // Published value, from memory (Wilkinson, The Algebraic Eigenvalue Problem, 1965): largest eigenvalue 10.746194182903…
    expect(e.values[20]).toBeCloseTo(10.746194182903, 11);
    const reference = eighJacobi(w).values;
    for (let i = 0; i < 21; i++) expect(Math.abs(e.values[i] - reference[i])).toBeLessThanOrEqual(1e-13 * 11);
  });

  it('graded spectrum 1 … 1e-15 in a random basis', () => {
    const n = 16;
    const d = Array.from({ length: n }, (_, i) => 10 ** -i);
    const a = fromSpectrum(randomIsometry(n, n, seededRandom(1)), d);
    const e = eigh(a);
    expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
    expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
    expect(e.values[n - 1]).toBeCloseTo(1, 14);
  });

  it('tight cluster 1 + k·1e-14 plus outliers', () => {
    const d = [...Array.from({ length: 10 }, (_, k) => 1 + k * 1e-14), -3, 5, 0];
    const a = fromSpectrum(randomIsometry(d.length, d.length, seededRandom(2)), d);
    const e = eigh(a);
    expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
    expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
  });

  it('block-diagonal (pinched) and Kronecker-structured inputs with exact zero blocks', () => {
    const rng = seededRandom(3);
    const blocks = directSum([randomHermitian(3, rng), ComplexMatrix.zeros(2), randomDensity(4, rng, 1), randomHermitian(1, rng)]);
    const structured = kron(randomDensity(3, rng, 2), randomHermitian(4, rng));
    for (const a of [blocks, structured]) {
      const e = eigh(a);
      expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
      expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
      const only = eigvalsh(a);
      for (let i = 0; i < a.rows; i++) expect(Math.abs(only[i] - e.values[i])).toBeLessThanOrEqual(1e-13 * a.rows);
    }
  });

  it('one dominant entry with the rest at rounding level, and a permuted diagonal with complex phases', () => {
    const n = 9;
    const a = randomHermitian(n, seededRandom(4));
    for (let k = 0; k < n * n; k++) {
      a.re[k] *= 1e-17;
      a.im[k] *= 1e-17;
    }
    a.re[4 * n + 4] = 1;
    const e = eigh(a);
    expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
    expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);

    // Off-diagonal-only complex "permutation" matrix: eigenvalues ±1.
    const p = new ComplexMatrix(4, 4);
    p.set(0, 3, 0, 1);
    p.set(3, 0, 0, -1);
    p.set(1, 2, Math.SQRT1_2, Math.SQRT1_2);
    p.set(2, 1, Math.SQRT1_2, -Math.SQRT1_2);
    const ep = eigh(p);
    expect(Array.from(ep.values).map((x) => Math.round(x * 1e12) / 1e12)).toEqual([-1, -1, 1, 1]);
    expect(relativeResidual(p, ep)).toBeLessThanOrEqual(ACCURACY);
  });

  it('off-diagonal entries near the square-root underflow range (1e-140 … 1e-200) still converge', () => {
    for (const tiny of [1e-140, 1e-150, 1e-155, 1e-160, 1e-170, 1e-200]) {
      const a = ComplexMatrix.diagonal([1, 0.5, 0.3, 0.2, 0.1]);
      a.set(2, 0, tiny, tiny);
      a.set(0, 2, tiny, -tiny);
      a.set(3, 0, tiny, 0);
      a.set(0, 3, tiny, 0);
      const e = eigh(a);
      expect(Array.from(e.values)).toEqual([0.1, 0.2, 0.3, 0.5, 1]);
      expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
      expect(Array.from(eigvalsh(a))).toEqual([0.1, 0.2, 0.3, 0.5, 1]);
    }
  });

  it('property: entries spread over 600 orders of magnitude (fast-check)', () => {
    const entry = fc
      .tuple(fc.double({ min: -1, max: 1, noNaN: true }), fc.integer({ min: -300, max: 300 }), fc.boolean())
      .map(([mantissa, exponent, zero]) => (zero ? 0 : mantissa * 10 ** exponent));
    const matrix = fc.integer({ min: 2, max: 8 }).chain((n) =>
      fc.array(fc.tuple(entry, entry), { minLength: n * n, maxLength: n * n }).map((pairs) => {
        const m = new ComplexMatrix(n, n);
        pairs.forEach(([re, im], k) => {
          m.re[k] = re;
          m.im[k] = im;
        });
        return hermitianPart(m);
      }),
    );
    fc.assert(
      fc.property(matrix, (a) => {
        // Eigenvalues of a matrix whose largest entry is itself near the subnormal range are not
        // representable to 53 bits, so neither they nor the residual can be checked to 1e-12.
        let largest = 0;
        for (let k = 0; k < a.re.length; k++) largest = Math.max(largest, Math.abs(a.re[k]), Math.abs(a.im[k]));
        fc.pre(largest === 0 || largest > 1e-250);
        for (const solve of [eigh, eighJacobi]) {
          const e = solve(a);
          expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
          expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
        }
        const only = eigvalsh(a);
        expect(only.every(Number.isFinite)).toBe(true);
      }),
      { numRuns: 300, seed: 1202 },
    );
  });

  it('property: sparse matrices with small integer entries (exact ties, zero blocks; fast-check)', () => {
    const entry = fc.oneof(fc.constant(0), fc.constant(0), fc.integer({ min: -3, max: 3 }));
    const matrix = fc.integer({ min: 1, max: 12 }).chain((n) =>
      fc.array(fc.tuple(entry, entry), { minLength: n * n, maxLength: n * n }).map((pairs) => {
        const m = new ComplexMatrix(n, n);
        pairs.forEach(([re, im], k) => {
          m.re[k] = re;
          m.im[k] = im;
        });
        return hermitianPart(m);
      }),
    );
    fc.assert(
      fc.property(matrix, (a) => {
        const e = eigh(a);
        expect(relativeResidual(a, e)).toBeLessThanOrEqual(ACCURACY);
        expect(orthonormalityDefect(e.vectors)).toBeLessThanOrEqual(ACCURACY);
        // Reference: Jacobi, an independent method, on the eigenvalues.
        const reference = eighJacobi(a).values;
        for (let i = 0; i < a.rows; i++) expect(Math.abs(e.values[i] - reference[i])).toBeLessThanOrEqual(1e-12 * (1 + Math.abs(reference[i])) * a.rows);
      }),
      { numRuns: 400, seed: 4242 },
    );
  });

  it('many calls of mixed sizes reuse scratch buffers without cross-talk', () => {
    const rng = seededRandom(5);
    const inputs = [3, 7, 3, 12, 7, 2, 12].map((n) => randomHermitian(n, rng));
    const first = inputs.map((a) => eigh(a).values);
    const second = inputs.map((a) => eigh(a).values);
    for (let k = 0; k < inputs.length; k++) expect(Array.from(second[k])).toEqual(Array.from(first[k]));
  });
});
