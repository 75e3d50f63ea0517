// Checkpoints: the oracle and the facial reduction call them between expensive steps and let what they throw pass.
import { describe, expect, it } from 'vitest';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { LinearOracle, type OracleConstraint } from '../../src/oracle/index.js';
import { feasibleFace } from '../../src/problem/feasible-face.js';
import type { Problem } from '../../src/problem/model.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { referenceDualBound, traceOfProduct } from './reference.js';

class Abort extends Error {}

/** Equalities and intervals around a random full-rank state, so every call has work to do. */
function constraintsAround(n: number, count: number, seed: number): OracleConstraint[] {
  const rng = seededRandom(seed);
  const rho = randomDensity(n, rng);
  return Array.from({ length: count }, (_, i) => {
    const operator = randomHermitian(n, rng);
    const value = traceOfProduct(operator, rho);
    const width = i % 2 === 0 ? 0 : 1e-3;
    return { label: `c${i}`, operator, lower: value - width, upper: value + width };
  });
}

/** A checkpoint that counts calls and throws on call number `limit`. */
function countingCheckpoint(limit = Infinity): { calls: () => number; checkpoint: () => void } {
  let calls = 0;
  return {
    calls: () => calls,
    checkpoint: () => {
      calls += 1;
      if (calls >= limit) throw new Abort(`stopped at call ${calls}`);
    },
  };
}

describe('Oracle checkpoints', () => {
  it('the constructor calls its checkpoint between its passes and lets the throw through', () => {
    const constraints = constraintsAround(6, 8, 1);
    const counter = countingCheckpoint();
    new LinearOracle(6, constraints, { checkpoint: counter.checkpoint });
    // One call per equality in the span, one per interval row, and two between the passes.
    expect(counter.calls()).toBeGreaterThanOrEqual(8 + 2);
    expect(() => new LinearOracle(6, constraints, { checkpoint: countingCheckpoint(1).checkpoint })).toThrow(Abort);
  });

  it('findFeasiblePoint and minimize call it at least once per interior-point iteration', () => {
    const constraints = constraintsAround(6, 8, 2);
    const oracle = new LinearOracle(6, constraints);
    const feasibility = countingCheckpoint();
    const feasible = oracle.findFeasiblePoint({ checkpoint: feasibility.checkpoint });
    expect(feasible.status).toBe('OPTIMAL');
    expect(feasibility.calls()).toBeGreaterThanOrEqual(feasible.iterations);
    const G = randomHermitian(6, seededRandom(3));
    const counter = countingCheckpoint();
    const result = oracle.minimize(G, { checkpoint: counter.checkpoint });
    expect(result.status).toBe('OPTIMAL');
    expect(counter.calls()).toBeGreaterThanOrEqual(result.iterations);
    // The answer is the one an uninterrupted oracle gives: dual bound recomputed with mathjs (reference.ts).
    const independent = referenceDualBound(G, constraints, result.multipliersLower, result.multipliersUpper);
    expect(result.primalValue - independent).toBeLessThan(1e-6);
  });

  it('a throwing checkpoint aborts minimize, and the oracle still answers the next call', () => {
    const constraints = constraintsAround(8, 10, 4);
    const oracle = new LinearOracle(8, constraints);
    const G = randomHermitian(8, seededRandom(5));
    expect(() => oracle.minimize(G, { checkpoint: countingCheckpoint(3).checkpoint })).toThrow(Abort);
    const after = oracle.minimize(G);
    const fresh = new LinearOracle(8, constraints).minimize(G);
    expect(after.status).toBe('OPTIMAL');
    expect(Math.abs(after.primalValue - fresh.primalValue)).toBeLessThan(1e-6);
  });

  it('the constructor checkpoint serves every later call unless a call brings its own', () => {
    const constraints = constraintsAround(6, 6, 6);
    const counter = countingCheckpoint();
    const oracle = new LinearOracle(6, constraints, { checkpoint: counter.checkpoint });
    const afterConstruction = counter.calls();
    oracle.minimize(randomHermitian(6, seededRandom(7)));
    expect(counter.calls()).toBeGreaterThan(afterConstruction);
    const own = countingCheckpoint();
    const before = counter.calls();
    oracle.minimize(randomHermitian(6, seededRandom(8)), { checkpoint: own.checkpoint });
    expect(counter.calls()).toBe(before);
    expect(own.calls()).toBeGreaterThan(0);
  });

  it('feasibleFace calls it once per eigendecomposition', () => {
    const rng = seededRandom(9);
    const operator = randomHermitian(4, rng);
    const problem = {
      dimensionA: 2,
      dimensionB: 2,
      constraints: [{ label: 'c', operator, lower: -1, upper: 1 }],
      branches: [{ label: 'k', krausOperators: [ComplexMatrix.identity(4)], keyProjectors: [ComplexMatrix.identity(4)] }],
    } as unknown as Problem;
    const counter = countingCheckpoint();
    feasibleFace(problem, { checkpoint: counter.checkpoint });
    expect(counter.calls()).toBe(1);
    expect(() => feasibleFace(problem, { checkpoint: countingCheckpoint(1).checkpoint })).toThrow(Abort);
  });
});
