import { describe, expect, it } from 'vitest';
import { hermiticityDefect, trace } from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { numericalRank } from '../../src/linear-algebra/support.js';
import { randomDensity, randomHermitian, randomIsometry, randomUnitary, seededRandom } from '../helpers/random.js';
import { orthonormalityDefect } from './eigen-helpers.js';

describe('seeded random test data', () => {
  it('is reproducible and uniform-looking on [0, 1)', () => {
    const a = seededRandom(42);
    const b = seededRandom(42);
    const c = seededRandom(43);
    const xs = Array.from({ length: 10000 }, () => a());
    expect(xs.slice(0, 5)).toEqual(Array.from({ length: 5 }, () => b()));
    expect(xs[0]).not.toBe(c());
    expect(Math.min(...xs)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...xs)).toBeLessThan(1);
    // Mean of 10⁴ uniforms is 1/2 ± 0.003 (one standard deviation); allow five.
    expect(Math.abs(xs.reduce((s, x) => s + x, 0) / xs.length - 0.5)).toBeLessThan(0.015);
  });

  it('randomDensity: Hermitian, unit trace, PSD, requested rank', () => {
    const rng = seededRandom(7);
    for (const [n, rank] of [
      [4, 4],
      [6, 2],
      [9, 1],
    ]) {
      const rho = randomDensity(n, rng, rank);
      expect(hermiticityDefect(rho)).toBe(0);
      expect(trace(rho).re).toBeCloseTo(1, 14);
      expect(eigh(rho).values[0]).toBeGreaterThan(-1e-14);
      expect(numericalRank(rho)).toBe(rank);
    }
    expect(() => randomDensity(3, rng, 4)).toThrow('randomDensity: rank 4 not in 1..3');
  });

  it('randomIsometry / randomUnitary have orthonormal columns; randomHermitian is Hermitian', () => {
    const rng = seededRandom(8);
    expect(orthonormalityDefect(randomIsometry(7, 3, rng))).toBeLessThan(1e-14);
    expect(orthonormalityDefect(randomUnitary(6, rng))).toBeLessThan(1e-14);
    expect(hermiticityDefect(randomHermitian(5, rng))).toBe(0);
    expect(() => randomIsometry(2, 3, rng)).toThrow('randomIsometry: 3 columns exceed 2 rows');
  });
});
