// The objectives' allocation-saving paths give the same bits as the forms they replace; the forms themselves are
// checked against outside references in gradients.test.ts and sandwiched-inner.test.ts.
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, hermitianSum } from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { extrapolatedReference } from '../../src/objectives/sandwiched-up.js';
import { blockFrechet, blockFrechetParts, pinchedBlocks, powerFunction } from '../../src/objectives/spectral-blocks.js';
import { randomComplexGaussian, randomDensity, seededRandom } from '../helpers/random.js';

function expectSameBits(a: ComplexMatrix, b: ComplexMatrix): void {
  expect([a.rows, a.cols]).toEqual([b.rows, b.cols]);
  for (let k = 0; k < a.re.length; k++) expect(Object.is(a.re[k], b.re[k]) && Object.is(a.im[k], b.im[k])).toBe(true);
}

describe('allocation-saving paths of the objectives', () => {
  const rng = seededRandom(5);
  const sizes = [3, 2, 4];
  const offsets = [0, 3, 5];

  it('the Fréchet blocks kept apart equal the pinching of their direct sum', () => {
    const eigs = sizes.map((n) => eigh(randomDensity(n, rng)));
    const direction = hermitianSum(randomComplexGaussian(9, 9, rng));
    const parts = blockFrechetParts(eigs, powerFunction(-1 / 6), direction, sizes, offsets);
    const pinched = pinchedBlocks(blockFrechet(eigs, powerFunction(-1 / 6), direction, sizes, offsets), sizes, offsets);
    parts.forEach((p, k) => expectSameBits(p, pinched[k]));
  });

  it("the extrapolated step from τ's given eigendecompositions equals the one that decomposes τ itself", () => {
    const reference = [sizes.map((n) => randomDensity(n, rng)), [randomDensity(2, rng)]];
    const mapped = reference.map((branch) => branch.map((b) => randomDensity(b.rows, rng)));
    const given = [reference[0].map((b) => eigh(b)), undefined];
    const plain = extrapolatedReference(reference, mapped, 0.75);
    const reused = extrapolatedReference(reference, mapped, 0.75, given);
    expect(plain).not.toBeNull();
    plain!.forEach((branch, c) => branch.forEach((b, k) => expectSameBits(reused![c][k], b)));
  });
});
