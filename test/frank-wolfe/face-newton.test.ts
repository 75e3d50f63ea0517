// The second-order phase on the optimal face against published values and the oracle's own duality bound.
import { describe, expect, it } from 'vitest';
import { faceNewtonStep, type HeldSide } from '../../src/frank-wolfe/face-newton.js';
import { linearizationBound } from '../../src/certificate/bound.js';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective, type Objective } from '../../src/objectives/index.js';
import { LinearOracle } from '../../src/oracle/index.js';
import type { EntropyRequest, Problem } from '../../src/problem/model.js';
import { bellDiagonal, binaryEntropy } from '../objectives/fixtures.js';
import { example } from './helpers.js';
import { povmTableProblem } from './interval-fixtures.js';

function evaluator(objective: Objective) {
  return (state: ComplexMatrix) => {
    const e = objective.evaluate(state, { assumeFullRank: true });
    return e.gradient && Number.isFinite(e.value) ? { ...e, gradient: e.gradient } : null;
  };
}

/** Runs face-Newton steps until none lowers F; returns the last point and its evaluation. */
function descend(problem: Problem, request: EntropyRequest, start: ComplexMatrix, held: HeldSide[], steps = 12) {
  const evaluate = evaluator(createObjective(problem, request));
  let x = start;
  let e = evaluate(x)!;
  let taken = 0;
  for (; taken < steps; taken++) {
    const step = faceNewtonStep(x, e, problem.constraints, held, evaluate);
    if (!step) break;
    x = step.point;
    e = step.evaluation;
  }
  return { x, e, taken };
}

/** The linearization bound at x with the oracle's multipliers (weak duality: below the minimum). */
function certifiedBelow(problem: Problem, request: EntropyRequest, x: ComplexMatrix): number {
  const objective = createObjective(problem, request);
  const e = objective.evaluate(x, { assumeFullRank: true });
  const oracle = new LinearOracle(x.rows, problem.constraints, { relativeAccuracy: 1e-11 });
  const split = oracle.stripEqualitySpan(e.gradient!);
  const answer = oracle.minimize(split.stripped, { relativeAccuracy: 1e-11 });
  const lower = Float64Array.from(answer.multipliersLower);
  const upper = Float64Array.from(answer.multipliersUpper);
  split.equalityCoefficients.forEach((c, i) => (c > 0 ? (lower[i] += c) : (upper[i] -= c)));
  return linearizationBound(problem, objective, x, lower, upper, e.reference, e).lowerBound;
}

describe('Newton steps on the face of held interval bounds', () => {
  it('reach 1 − h(Q) with both error rates held at the upper end of [Q − 1 %, Q] (Shor & Preskill, PRL 85, 441, 2000)', () => {
    const q = 0.05;
    const base = example('bb84-entangled', { 'qber-z': q, 'qber-x': q });
    const problem: Problem = { ...base, constraints: base.constraints.map((c) => ({ ...c, lower: q - 0.01, upper: q })) };
    // Start inside both intervals (error rates 4.5 %), away from the optimum.
    const start = bellDiagonal([1 - 0.09 + 0.01, 0.035, 0.035, 0.01]);
    const { e, taken } = descend(problem, { kind: 'von-neumann' }, start, ['upper', 'upper']);
    expect(taken).toBeGreaterThan(0);
    expect(Math.abs(e.value - (1 - binaryEntropy(q)))).toBeLessThanOrEqual(1e-10);
  });

  for (const [seed, request] of [
    [24, { kind: 'von-neumann' }],
    [35, { kind: 'petz-up', alpha: 1.5 }],
    [40, { kind: 'sandwiched-up', alpha: 1.5 }],
  ] as [number, EntropyRequest][]) {
    it(`seed ${seed}, ${request.kind}: six held table bounds, converged to a gap below 1e-8 against the oracle's dual bound`, () => {
      const { problem, truth } = povmTableProblem(seed);
      // Held sides: the optimum's multiplier signs (found once by a long oracle-certified run, stated below).
      const interior = new LinearOracle(4, problem.constraints, { relativeAccuracy: 1e-9 }).findFeasiblePoint().point!;
      const held = HELD[seed];
      const { x, e } = descend(problem, request, interior, held, 20);
      const lower = certifiedBelow(problem, request, x);
      // min ≤ F at any feasible state, the data's own state included (definition of the minimum).
      expect(e.value).toBeLessThanOrEqual(createObjective(problem, request).evaluate(truth).value);
      expect(lower).toBeLessThanOrEqual(e.value);
      expect(e.value - lower).toBeLessThanOrEqual(1e-8);
    });
  }
});

const HELD: Record<number, HeldSide[]> = {
  24: ['lower', 'lower', 'upper', 'upper', 'upper', 'lower'],
  35: ['upper', 'lower', 'upper', 'lower', 'upper', 'lower'],
  40: ['lower', 'upper', 'lower', 'upper', 'lower', 'upper'],
};
