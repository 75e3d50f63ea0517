// Device models whose optimum sits inside the cone with every tolerance interval of a POVM table active: the case
// where Frank–Wolfe and quasi-Newton steps must slide along interval faces instead of stalling on them.
import {
  add,
  ComplexMatrix,
  conjugate,
  hermitianPart,
  kron,
  multiplyAdjointRight,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { spectralFunction } from '../../src/linear-algebra/matrix-functions.js';
import type { Problem } from '../../src/problem/model.js';
import { randomComplexGaussian, randomDensity, seededRandom, type RandomSource } from '../helpers/random.js';
import { aliceKeyProblem } from '../objectives/fixtures.js';

/** A random POVM with `outcomes` elements on C^n: E_k = S^{-1/2} G_k G_k† S^{-1/2}, S = Σ G_k G_k†. */
export function randomPovm(n: number, outcomes: number, rng: RandomSource): ComplexMatrix[] {
  const grams = Array.from({ length: outcomes }, () => {
    const g = randomComplexGaussian(n, n, rng);
    return multiplyAdjointRight(g, g);
  });
  const sum = grams.reduce((s, g) => add(s, g), ComplexMatrix.zeros(n));
  const inverseRoot = spectralFunction(eigh(sum), (t) => 1 / Math.sqrt(t));
  return grams.map((g) => hermitianPart(conjugate(inverseRoot, g)));
}

/**
 * Alice's computational-basis key on C^2 ⊗ C^2 with a full joint table of random POVMs (2 outcomes on A, 3 on B)
 * measured on a random full-rank state, each entry p ± tolerance: six interval constraints.
 */
export function povmTableProblem(seed: number, tolerance = 1e-3): { problem: Problem; truth: ComplexMatrix } {
  const rng = seededRandom(seed);
  const truth = randomDensity(4, rng);
  const povmA = randomPovm(2, 2, rng);
  const povmB = randomPovm(2, 3, rng);
  const problem = aliceKeyProblem(2, 2);
  problem.constraints = povmA.flatMap((p, x) =>
    povmB.map((q, y) => {
      const operator = kron(p, q);
      const value = traceProductReal(operator, truth);
      return { label: `table[${x},${y}]`, operator, lower: value - tolerance, upper: value + tolerance };
    }),
  );
  return { problem, truth };
}
