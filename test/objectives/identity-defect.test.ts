// Σ K†K − 1 and the bound on its rounding (docs/math.md §5, "The identity part"), against exact rational arithmetic
// with Node's BigInt (every double is an integer multiple of 2⁻²⁰⁰ here, so each product is exact at 2⁻⁴⁰⁰).
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, scale } from '../../src/linear-algebra/complex-matrix.js';
import { identityDefect } from '../../src/objectives/identity-defect.js';
import { randomIsometry, seededRandom } from '../helpers/random.js';

const SHIFT = 200n;
const exact = (x: number) => BigInt(x * 2 ** Number(SHIFT));

/** ‖computed D − exact D‖_F with the exact D from BigInt sums. */
function exactError(kraus: readonly ComplexMatrix[], d: number, computed: ComplexMatrix): number {
  let squares = 0;
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < d; b++) {
      let re = a === b ? -(1n << (2n * SHIFT)) : 0n;
      let im = 0n;
      for (const k of kraus) {
        for (let i = 0; i < k.rows; i++) {
          const xr = exact(k.re[i * d + a]), xi = exact(k.im[i * d + a]), yr = exact(k.re[i * d + b]), yi = exact(k.im[i * d + b]);
          re += xr * yr + xi * yi;
          im += xr * yi - xi * yr;
        }
      }
      const dr = Number(exact(computed.re[a * d + b]) * (1n << SHIFT) - re) / 2 ** 400;
      const di = Number(exact(computed.im[a * d + b]) * (1n << SHIFT) - im) / 2 ** 400;
      squares += dr * dr + di * di;
    }
  }
  return Math.sqrt(squares);
}

describe('identityDefect', () => {
  // Kraus operators cut from a random 12×4 isometry V (V†V = 1 up to rounding), three 4×4 blocks, one scaled by 1/√3.
  const d = 4;
  const v = randomIsometry(12, d, seededRandom(5150));
  const blocks = [0, 1, 2].map((j) => {
    const k = ComplexMatrix.zeros(4, d);
    for (let i = 0; i < 4 * d; i++) {
      k.re[i] = v.re[j * 4 * d + i];
      k.im[i] = v.im[j * 4 * d + i];
    }
    return k;
  });
  const kraus = [...blocks, scale(blocks[2], Math.sqrt(1 / 3))];

  it('plain sums: the error against exact arithmetic is inside the stated bound', () => {
    const plain = identityDefect(kraus, d, 1, Infinity);
    expect(exactError(kraus, d, plain.matrix)).toBeLessThanOrEqual(plain.roundingBound);
    expect(plain.roundingBound).toBeLessThan(1e-13);
  });

  it('compensated sums: within their bound, and the bound is far below the plain one', () => {
    const plain = identityDefect(kraus, d, 1, Infinity);
    const compensated = identityDefect(kraus, d, 1, 0);
    const error = exactError(kraus, d, compensated.matrix);
    expect(error).toBeLessThanOrEqual(compensated.roundingBound);
    // |D| is of the size of the rounding of V†V plus the extra 1/√3 block, so u·‖D‖ dominates the compensated bound.
    expect(compensated.roundingBound).toBeLessThan(1e-3 * plain.roundingBound + 1e-16);
  });
});
