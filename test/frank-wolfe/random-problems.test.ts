// Random device models with constraints taken from a known state: whatever the solver's status, its bound must
// verify and lie below F at that feasible state (min ≤ F(truth) by definition of the minimum).
import { describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import type { EntropyRequest } from '../../src/problem/model.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { randomInstrumentProblem } from '../objectives/fixtures.js';

const REQUESTS: EntropyRequest[] = [
  { kind: 'von-neumann' },
  { kind: 'petz-up', alpha: 1.3 },
  { kind: 'petz-down', alpha: 1.7 },
  { kind: 'sandwiched-up', alpha: 1.5 },
];

describe('random instruments with statistics of a full-rank state', () => {
  for (const seed of [14, 17, 20, 23]) {
    it(`seed ${seed}: every kind returns a verified bound below F(truth), without throwing`, () => {
      const rng = seededRandom(seed);
      const dA = 2;
      const dB = 2 + (seed % 2);
      const d = dA * dB;
      const problem = randomInstrumentProblem(dA, dB, [d + 1, 3], [2, 1], [0.1 * (seed % 3), 0], rng);
      const truth = randomDensity(d, rng);
      problem.constraints = Array.from({ length: 1 + (seed % 5) }, (_, i) => {
        const operator = randomHermitian(d, rng);
        const value = traceProductReal(operator, truth);
        const tolerance = (seed % 2) * 0.01;
        return { label: `c${i}`, operator, lower: value - tolerance, upper: value + tolerance };
      });
      for (const request of REQUESTS) {
        const result = solve(problem, request, { gapTolerance: 1e-6, maxIterations: 300, timeLimitMs: 1500 });
        expect(['CERTIFIED', 'LIMIT_REACHED']).toContain(result.status);
        const atTruth = createObjective(problem, request).evaluate(truth).value;
        expect(result.certifiedLowerBound!).toBeLessThanOrEqual(atTruth + 1e-9);
        expect(verifyResult(problem, request, result).valid).toBe(true);
      }
    });
  }
});
