// The deadline poll inside the kernels (src/linear-algebra/interruption.ts): large eigendecompositions and products
// call the installed checkpoint between their stages, an abort propagates, and an aborted kernel leaves nothing
// behind that changes the next call. Reference: the eigen-equation A·V = V·Λ (an identity, checked to rounding).
import { describe, expect, it } from 'vitest';
import { multiply } from '../../src/linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../../src/linear-algebra/eigen.js';
import { POLLED_ORDER, pollInterruption, whilePolling, withoutPolling } from '../../src/linear-algebra/interruption.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';

class Stop extends Error {}

function countPolls(run: () => void): number {
  let polls = 0;
  whilePolling(() => void polls++, run);
  return polls;
}

describe('deadline polls inside long kernels', () => {
  const large = randomHermitian(256, seededRandom(11));

  it('an eigendecomposition at d = 256 polls between its stages; small matrices never poll', () => {
    // Householder columns, QL eigenvalues and back-transformed vectors: 8 + 8 + 8 polls at 32 stages per poll.
    expect(countPolls(() => eigh(large))).toBeGreaterThanOrEqual(20);
    expect(countPolls(() => eigvalsh(large))).toBeGreaterThanOrEqual(14);
    expect(countPolls(() => multiply(large, large))).toBe(1);
    const small = randomHermitian(POLLED_ORDER - 1, seededRandom(12));
    expect(countPolls(() => eigh(small))).toBe(0);
  });

  it('a checkpoint that throws aborts the eigensolver, and the next eigendecomposition is unaffected', () => {
    const expected = eigh(large);
    for (const after of [1, 5, 12, 20]) {
      let polls = 0;
      const abort = () => {
        if (++polls >= after) throw new Stop();
      };
      expect(() => whilePolling(abort, () => eigh(large))).toThrow(Stop);
    }
    const again = eigh(large);
    expect(Array.from(again.values)).toEqual(Array.from(expected.values));
    // A·V = V·Λ to rounding.
    const av = multiply(large, again.vectors);
    let worst = 0;
    for (let i = 0; i < 256; i++) {
      for (let j = 0; j < 256; j++) {
        const k = i * 256 + j;
        worst = Math.max(worst, Math.abs(av.re[k] - again.vectors.re[k] * again.values[j]), Math.abs(av.im[k] - again.vectors.im[k] * again.values[j]));
      }
    }
    expect(worst).toBeLessThan(1e-10 * Math.abs(again.values[255]));
  });

  it('runs nest: an inner run restores the outer checkpoint, withoutPolling suspends it, nothing is left installed', () => {
    const seen: string[] = [];
    whilePolling(
      () => seen.push('outer'),
      () => {
        whilePolling(() => seen.push('inner'), () => pollInterruption());
        whilePolling(undefined, () => pollInterruption());
        withoutPolling(() => pollInterruption());
        pollInterruption();
      },
    );
    pollInterruption();
    expect(seen).toEqual(['inner', 'outer', 'outer']);
  });
});
