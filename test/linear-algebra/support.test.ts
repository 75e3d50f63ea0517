import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  add,
  ComplexMatrix,
  frobeniusNorm,
  kron,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  scale,
  subtract,
} from '../../src/linear-algebra/complex-matrix.js';
import {
  kernelIsometry,
  numericalRank,
  rangeIsometry,
  supportDecomposition,
  zeroEigenvalueTolerance,
} from '../../src/linear-algebra/support.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../../src/linear-algebra/rounding.js';
import { randomComplexGaussian, randomDensity, randomIsometry, seededRandom } from '../helpers/random.js';
import { orthonormalityDefect } from './eigen-helpers.js';

/** Projector V·V† onto the column space of an isometry. */
function projector(v: ComplexMatrix): ComplexMatrix {
  return multiplyAdjointRight(v, v);
}

/** A = V·D·V† with V a random n×r isometry and D in [1, 2] (well conditioned on its range). */
function onKnownSubspace(n: number, r: number, seed: number): { a: ComplexMatrix; v: ComplexMatrix } {
  const rng = seededRandom(seed);
  const v = randomIsometry(n, r, rng);
  const d = Array.from({ length: r }, () => 1 + rng());
  const a = multiply(multiply(v, ComplexMatrix.diagonal(d)), adjointOf(v));
  return { a, v };
}

function adjointOf(v: ComplexMatrix): ComplexMatrix {
  const out = new ComplexMatrix(v.cols, v.rows);
  for (let i = 0; i < v.rows; i++) {
    for (let j = 0; j < v.cols; j++) out.set(j, i, v.re[i * v.cols + j], -v.im[i * v.cols + j]);
  }
  return out;
}

describe('range and kernel isometries', () => {
  it.each([
    [4, 1],
    [6, 3],
    [9, 5],
    [16, 8],
    [30, 29],
    [12, 12],
  ])('n=%i, rank %i: projectors onto the known range and its complement', (n, r) => {
    const { a, v } = onKnownSubspace(n, r, 10 * n + r);
    const range = rangeIsometry(a);
    const kernel = kernelIsometry(a);
    expect(range.cols).toBe(r);
    expect(kernel.cols).toBe(n - r);
    expect(numericalRank(a)).toBe(r);
    expect(orthonormalityDefect(range)).toBeLessThanOrEqual(1e-12);
    // Reference: the projector V·V† built from the isometry that generated A.
    expect(frobeniusNorm(subtract(projector(range), projector(v)))).toBeLessThanOrEqual(1e-12);
    if (n > r) {
      expect(orthonormalityDefect(kernel)).toBeLessThanOrEqual(1e-12);
      const complement = subtract(ComplexMatrix.identity(n), projector(v));
      expect(frobeniusNorm(subtract(projector(kernel), complement))).toBeLessThanOrEqual(1e-12);
      expect(frobeniusNorm(multiplyAdjointLeft(range, kernel))).toBeLessThanOrEqual(1e-12);
    }
  });

  it('property: the rank of V·D·V† is the number of columns of V, for any size, rank and scale (fast-check)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 0, max: 12 }),
        fc.integer({ min: -100, max: 100 }),
        fc.integer({ min: 1, max: 1_000_000 }),
        (n, rankWanted, exponent, seed) => {
          const r = Math.min(rankWanted, n);
          const rng = seededRandom(seed);
          const v = randomIsometry(n, r, rng);
          // Spread of eigenvalues over [1, 1e3]: well above the tolerance, far from it in condition.
          const d = Array.from({ length: r }, () => 10 ** (exponent + 3 * rng()));
          const a = multiply(multiply(v, ComplexMatrix.diagonal(d)), adjointOf(v));
          expect(numericalRank(a)).toBe(r);
          const range = rangeIsometry(a);
          expect(range.cols).toBe(r);
          if (r > 0) expect(frobeniusNorm(subtract(projector(range), projector(v)))).toBeLessThanOrEqual(1e-11);
        },
      ),
      { numRuns: 150, seed: 77 },
    );
  });

  it('rank of a Kronecker product of rank-deficient factors is the product of ranks', () => {
    // Literature identity: rank(A ⊗ B) = rank(A)·rank(B).
    const a = randomDensity(4, seededRandom(1), 2);
    const b = randomDensity(6, seededRandom(2), 3);
    expect(numericalRank(a)).toBe(2);
    expect(numericalRank(b)).toBe(3);
    const ab = kron(a, b);
    expect(numericalRank(ab)).toBe(6);
    expect(rangeIsometry(ab).cols).toBe(6);
    // The range of A ⊗ B is range(A) ⊗ range(B).
    const expected = kron(projector(rangeIsometry(a)), projector(rangeIsometry(b)));
    expect(frobeniusNorm(subtract(projector(rangeIsometry(ab)), expected))).toBeLessThanOrEqual(1e-12);
  });

  it('range of a channel output Σ K K† (Kraus operators of a rank-reducing map)', () => {
    const rng = seededRandom(3);
    // Three Kraus operators 8×8 that all map into a fixed 5-dimensional subspace W.
    const w = randomIsometry(8, 5, rng);
    let sum = new ComplexMatrix(8, 8);
    for (let j = 0; j < 3; j++) {
      const k = multiply(w, randomComplexGaussian(5, 8, rng));
      sum = add(sum, multiplyAdjointRight(k, k));
    }
    const range = rangeIsometry(sum);
    expect(range.cols).toBe(5);
    expect(frobeniusNorm(subtract(projector(range), projector(w)))).toBeLessThanOrEqual(1e-12);
  });

  it('is scale invariant (the tolerance is relative to ‖A‖_F)', () => {
    const { a } = onKnownSubspace(7, 3, 4);
    for (const s of [1e-200, 1e-8, 1e8, 1e200]) expect(numericalRank(scale(a, s))).toBe(3);
  });

  it('an eigenvalue just above the tolerance counts; one at rounding level does not', () => {
    const { a } = onKnownSubspace(6, 2, 5);
    const kernelVector = kernelIsometry(a);
    const single = multiply(
      multiply(kernelVector, ComplexMatrix.diagonal([1, 0, 0, 0])),
      adjointOf(kernelVector),
    );
    const tolerance = zeroEigenvalueTolerance(a);
    expect(numericalRank(add(a, scale(single, 1e-6)))).toBe(3);
    expect(numericalRank(add(a, scale(single, 1e-3 * tolerance)))).toBe(2);
  });

  it('tolerance is c·n·u·‖A‖_F with the documented constant', () => {
    expect(BACKWARD_ERROR_CONSTANT).toBe(64);
    expect(UNIT_ROUNDOFF).toBe(2 ** -53);
    const a = randomDensity(5, seededRandom(6));
    expect(zeroEigenvalueTolerance(a)).toBeCloseTo(64 * 5 * 2 ** -53 * frobeniusNorm(a), 30);
    const d = supportDecomposition(a);
    expect(d.tolerance).toBe(zeroEigenvalueTolerance(a));
    expect(d.rank).toBe(5);
  });

  it('zero matrix: empty range, full kernel; numericalRank works on indefinite matrices', () => {
    expect(rangeIsometry(ComplexMatrix.zeros(3)).cols).toBe(0);
    expect(kernelIsometry(ComplexMatrix.zeros(3)).cols).toBe(3);
    expect(numericalRank(ComplexMatrix.diagonal([1, -2, 0]))).toBe(2);
  });

  it('rejects matrices that are clearly not PSD, naming the caller', () => {
    expect(() => rangeIsometry(ComplexMatrix.diagonal([1, -0.5]))).toThrow('rangeIsometry: matrix is not positive semidefinite');
    expect(() => kernelIsometry(ComplexMatrix.diagonal([1, -0.5]))).toThrow('kernelIsometry: matrix is not positive semidefinite');
    expect(() => rangeIsometry(new ComplexMatrix(2, 3))).toThrow('eigh: matrix is 2x3, not square');
  });

  it('eigenvalues at rounding level below zero (from forming A) still count as kernel', () => {
    const { a } = onKnownSubspace(10, 4, 7);
    const e = supportDecomposition(a);
    expect(e.rank).toBe(4);
    // The computed kernel eigenvalues are tiny of either sign, well inside the tolerance.
    for (let k = 0; k < 6; k++) expect(Math.abs(e.eigen.values[k])).toBeLessThanOrEqual(e.tolerance);
  });
});
