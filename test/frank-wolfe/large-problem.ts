// A d = 256 problem (16 × 16) with dense random constraints, for deadline tests: a classical 16-letter key read
// from Alice's computational basis, and interval constraints around the values of a random full-rank state.
import { ComplexMatrix, kron, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { matrixToJson } from '../../src/problem/json.js';
import type { ProblemJson } from '../../src/problem/json.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';

export function largeProblemJson(dimensionA: number, dimensionB: number, constraintCount: number, seed: number): ProblemJson {
  const rng = seededRandom(seed);
  const d = dimensionA * dimensionB;
  const truth = randomDensity(d, rng);
  const constraints = Array.from({ length: constraintCount }, (_, i) => {
    const operator = randomHermitian(d, rng);
    const value = traceProductReal(operator, truth);
    return { label: `dense[${i}]`, operator: matrixToJson(operator), lower: value - 1e-3, upper: value + 1e-3 };
  });
  const keyProjectors = Array.from({ length: dimensionA }, (_, k) => {
    const e = new ComplexMatrix(dimensionA, dimensionA);
    e.re[k * dimensionA + k] = 1;
    return matrixToJson(kron(e, ComplexMatrix.identity(dimensionB)));
  });
  return {
    dimensionA,
    dimensionB,
    constraints,
    branches: [{ label: 'key', krausOperators: [matrixToJson(ComplexMatrix.identity(d))], keyProjectors }],
  };
}
