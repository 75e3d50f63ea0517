// Score-weighted bb84-prepare-measure just above α = 1 (the finite-size layer's single-round problems): the solver
// used to throw from a quasi-Newton direction of size 1e12 and to return a final state with λ_min = −1e-5
// (docs/convergence.md, "Non-finite steps"). Outside references: mathjs eigenvalues for positivity, and the honest
// state of the builder (a feasible state, so F there bounds the minimum from above) evaluated by the objective.
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { scoredProblem } from '../../src/finite-size/single-round.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { ComplexMatrix, kron, scale } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { matrixFromJson } from '../../src/problem/json.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { buildExample } from '../../src/protocols/index.js';
import { toMathjs } from '../linear-algebra/mathjs-bridge.js';

const base = problemFromJson(
  buildExample('bb84-prepare-measure', { qber: 0.02, transmittance: 0.5, 'z-basis-probability': 0.5, 'test-probability': 0.1 }),
);
const SCORES_A = [-6.001747193713071, 0.9677850362722448, -5.921799130617842, -9.91969100101227, 8.715418583664707, -8.52234289965557, 24.443224165207358, -26.088287090725764];
const SCORES_B = [-5.92000988580437, 0.9561019382979384, -5.919697555066451, -5.93531600101227, 8.797359639635529, -8.604184153952032, 24.525376939510615, -26.007009911243927];
const between = (t: number) => SCORES_A.map((a, c) => a + t * (SCORES_B[c] - a));
const SETTINGS = { gapTolerance: 1e-6, maxIterations: 40 };

/** λ_min by mathjs (a general-purpose reference library). */
function smallestEigenvalue(m: ComplexMatrix): number {
  const values = math.eigs(toMathjs(m)).values as unknown as math.Matrix;
  return Math.min(...(values.toArray() as number[]).map((v) => math.re(v as unknown as math.Complex) as number));
}

/** ρ_A ⊗ 1/d_B: it meets the source-marginal equalities (the only constraints), so F there bounds the minimum above. */
function productState(): ComplexMatrix {
  const state = kron(base.sourceMarginal!, ComplexMatrix.identity(base.dimensionB));
  return scale(state, 1 / base.dimensionB);
}

const cases = [
  { name: '(a) α = 1.0001, the scores that threw', alpha: 1.0001, scores: SCORES_A },
  { name: '(b) α = 1.0001455857811374', alpha: 1.0001455857811374, scores: SCORES_B },
  { name: 'α = 1.0003 at the scores that threw', alpha: 1.0003, scores: SCORES_A },
  { name: 'α = 1.001 three quarters of the way (final state had λ_min = −2.7e-7)', alpha: 1.001, scores: between(0.75) },
  { name: 'α = 1.0003 halfway (final state had λ_min = −5.1e-11)', alpha: 1.0003, scores: between(0.5) },
];

describe('non-finite steps near α = 1 end in a valid result', () => {
  for (const { name, alpha, scores } of cases) {
    it(name, () => {
      const problem = scoredProblem(base, scores);
      const request = { kind: 'sandwiched-up', alpha } as const;
      const result = solve(problem, request, SETTINGS);
      expect(['CERTIFIED', 'LIMIT_REACHED']).toContain(result.status);
      expect(verifyResult(problem, request, result).valid).toBe(true);
      const finalState = matrixFromJson(result.finalState!, 'finalState');
      // Positive semidefinite up to the rounding of lifting from the feasible face (u·d·‖x‖).
      expect(smallestEigenvalue(finalState)).toBeGreaterThanOrEqual(-1e-14);
      if (result.upperBound !== null) expect(result.gap!).toBeGreaterThanOrEqual(0);
      const product = productState();
      expect(smallestEigenvalue(product)).toBeGreaterThanOrEqual(-1e-14);
      const atProduct = createObjective(problem, request).evaluate(product, { withGradient: false }).value;
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(atProduct);
    });
  }
});
