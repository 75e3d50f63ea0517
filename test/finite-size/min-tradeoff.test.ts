// The min-tradeoff export against independent solves and Shor–Preskill's closed form at other statistics.
import { describe, expect, it } from 'vitest';
import { solve } from '../../src/frank-wolfe/solve.js';
import { minTradeoffFunction } from '../../src/finite-size/min-tradeoff.js';
import { buildExample } from '../../src/protocols/index.js';
import { binaryEntropy } from '../../src/protocols/test-rounds.js';
import { problemFromJson } from '../../src/problem/validate.js';

const problemAt = (qz: number, qx: number) => problemFromJson(buildExample('bb84-entangled', { 'qber-z': qz, 'qber-x': qx }));

describe('min-tradeoff function from a von Neumann certificate', () => {
  const base = problemAt(0.05, 0.05);
  const result = solve(base, { kind: 'von-neumann' }, { gapTolerance: 1e-9 });
  const g = minTradeoffFunction(base, result);
  const at = (qz: number, qx: number) => g.constant + g.coefficients[0].coefficient * qz + g.coefficients[1].coefficient * qx;

  it('equals the certified bound at the solved statistics and names one coefficient per constraint', () => {
    expect(g.coefficients.map((c) => c.label)).toEqual(['qber-z', 'qber-x']);
    expect(g.valueAtSolvedStatistics).toBeLessThanOrEqual(result.certifiedLowerBound!);
    expect(g.valueAtSolvedStatistics).toBeGreaterThan(result.certifiedLowerBound! - 1e-12);
    // Tangent of 1 − h(Q_X) at Q_X = 0.05: slope −log2((1−Q)/Q) (Shor–Preskill's closed form, differentiated).
    expect(g.coefficients[1].coefficient).toBeCloseTo(-Math.log2(0.95 / 0.05), 4);
    expect(g.coefficients[0].coefficient).toBeCloseTo(0, 5);
  });

  it.each([
    [0.01, 0.01],
    [0.02, 0.1],
    [0.08, 0.03],
    [0.15, 0.2],
    [0.0, 0.0],
  ])('lower-bounds the independent solve and 1 − h(Q_X) (Shor–Preskill) at Q_Z = %f, Q_X = %f', (qz, qx) => {
    const other = solve(problemAt(qz, qx), { kind: 'von-neumann' }, { gapTolerance: 1e-7 });
    expect(at(qz, qx)).toBeLessThanOrEqual(other.upperBound! + 1e-12);
    expect(at(qz, qx)).toBeLessThanOrEqual(1 - binaryEntropy(qx) + 1e-12);
  });

  it('prepare-and-measure with loss (a face from the rank-2 source marginal): valid at other error rates and losses', () => {
    const pm = (q: number, eta: number) => problemFromJson(buildExample('bb84-prepare-measure', { qber: q, transmittance: eta }));
    const solved = pm(0.03, 0.4);
    const tradeoff = minTradeoffFunction(solved, solve(solved, { kind: 'von-neumann' }, { gapTolerance: 1e-8 }));
    expect(tradeoff.validity).toMatch(/source marginal has rank 2/);
    for (const [q, eta] of [
      [0.01, 0.4],
      [0.06, 0.3],
      [0.03, 0.6],
    ]) {
      const other = pm(q, eta);
      // The same constraints in the same order, at the other statistics.
      const value = other.constraints.reduce((acc, c, i) => acc + tradeoff.coefficients[i].coefficient * c.lower, tradeoff.constant);
      const independent = solve(other, { kind: 'von-neumann' }, { gapTolerance: 1e-7 });
      expect(value).toBeLessThanOrEqual(independent.upperBound! + 1e-9);
      // Common practice (erasure): p_Z²·η·(1 − h(q)) per round for a single-photon source.
      expect(value).toBeLessThanOrEqual(0.25 * eta * (1 - binaryEntropy(q)) + 1e-9);
    }
  });

  it('refuses results that are not von Neumann certificates', () => {
    const renyi = solve(base, { kind: 'petz-up', alpha: 1.5 });
    expect(() => minTradeoffFunction(base, renyi)).toThrow(/von Neumann/);
  });
});
