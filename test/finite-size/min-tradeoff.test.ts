// The min-tradeoff function every constrained von Neumann solve returns: against independent solves and
// Shor–Preskill's closed form at other statistics, re-checked by the verifier, absent for the Rényi kinds.
import { describe, expect, it } from 'vitest';
import { solve } from '../../src/frank-wolfe/solve.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { minTradeoffOf } from '../../src/finite-size/min-tradeoff.js';
import { buildExample } from '../../src/protocols/index.js';
import { binaryEntropy } from '../../src/protocols/test-rounds.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { resultFromWire, resultToWire } from '../../src/service/wire.js';
import type { SolveResult__Output } from '../../src/service/generated/renyibound/v1/SolveResult.js';

const problemAt = (qz: number, qx: number) => problemFromJson(buildExample('bb84-entangled', { 'qber-z': qz, 'qber-x': qx }));
const vonNeumann = { kind: 'von-neumann' as const };

describe('min-tradeoff function returned with a constrained von Neumann solve', () => {
  const base = problemAt(0.05, 0.05);
  const result = solve(base, vonNeumann, { gapTolerance: 1e-9 });
  const g = result.minTradeoff!;
  const at = (qz: number, qx: number) => g.constant + g.coefficients[0].coefficient * qz + g.coefficients[1].coefficient * qx;

  it('is part of the result, one coefficient per constraint, at most the certified bound at the solved statistics', () => {
    expect(result.status).toBe('CERTIFIED');
    expect(g.coefficients.map((c) => c.label)).toEqual(['qber-z', 'qber-x']);
    expect(g.minimumOverIntervals).toBeLessThanOrEqual(result.certifiedLowerBound!);
    expect(g.minimumOverIntervals).toBeGreaterThan(result.certifiedLowerBound! - 1e-12);
    expect(g.validity).toMatch(/whole state space/);
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
  ])('lower-bounds the independent solve and 1 − h(Q_X) (Shor–Preskill 2000) at Q_Z = %f, Q_X = %f', (qz, qx) => {
    const other = solve(problemAt(qz, qx), vonNeumann, { gapTolerance: 1e-7 });
    expect(at(qz, qx)).toBeLessThanOrEqual(other.upperBound! + 1e-12);
    expect(at(qz, qx)).toBeLessThanOrEqual(1 - binaryEntropy(qx) + 1e-12);
    // Each independent solve carries its own function, tight at its own statistics.
    expect(other.minTradeoff!.minimumOverIntervals).toBeGreaterThanOrEqual(1 - binaryEntropy(qx) - 1e-6);
  });

  it('is re-checked by verify: the stated function passes, any changed number or label is refused', () => {
    expect(verifyResult(base, vonNeumann, result)).toMatchObject({ valid: true });
    const tampered = [
      { ...g, constant: g.constant + 1e-9 },
      { ...g, coefficients: g.coefficients.map((c, i) => (i === 1 ? { ...c, coefficient: c.coefficient * (1 + 1e-9) } : c)) },
      { ...g, coefficients: g.coefficients.slice(1) },
      { ...g, coefficients: g.coefficients.map((c, i) => (i === 0 ? { ...c, label: 'other' } : c)) },
      { ...g, minimumOverIntervals: g.minimumOverIntervals + 1e-6 },
      { ...g, validity: 'everywhere' },
    ];
    for (const minTradeoff of tampered) {
      const report = verifyResult(base, vonNeumann, { ...result, minTradeoff });
      expect(report.valid).toBe(false);
      expect(report.reason).toMatch(/minTradeoff/);
    }
    expect(verifyResult(base, vonNeumann, { ...result, certificate: null, minTradeoff: g }).valid).toBe(false);
  });

  it('survives the wire (SolveResult.min_tradeoff) unchanged, and verify still accepts it', () => {
    const back = resultFromWire(resultToWire(result, false) as unknown as SolveResult__Output);
    expect(back.minTradeoff).toEqual(g);
    expect(verifyResult(base, vonNeumann, back).valid).toBe(true);
  });

  it('prepare-and-measure with loss (a face from the rank-2 source marginal): valid at other error rates and losses', () => {
    const pm = (q: number, eta: number) => problemFromJson(buildExample('bb84-prepare-measure', { qber: q, transmittance: eta }));
    const solved = pm(0.03, 0.4);
    const solvedResult = solve(solved, vonNeumann, { gapTolerance: 1e-8 });
    const tradeoff = solvedResult.minTradeoff!;
    expect(tradeoff.validity).toMatch(/source marginal has rank 2/);
    expect(verifyResult(solved, vonNeumann, solvedResult).valid).toBe(true);
    for (const [q, eta] of [
      [0.01, 0.4],
      [0.06, 0.3],
      [0.03, 0.6],
    ]) {
      const other = pm(q, eta);
      // The same constraints in the same order, at the other statistics.
      const value = other.constraints.reduce((acc, c, i) => acc + tradeoff.coefficients[i].coefficient * c.lower, tradeoff.constant);
      const independent = solve(other, vonNeumann, { gapTolerance: 1e-7 });
      expect(value).toBeLessThanOrEqual(independent.upperBound! + 1e-9);
      // Common practice (erasure): p_Z²·η·(1 − h(q)) per round for a single-photon source.
      expect(value).toBeLessThanOrEqual(0.25 * eta * (1 - binaryEntropy(q)) + 1e-9);
    }
  });

  it('is absent for the Rényi kinds and for a problem without constraints; minTradeoffOf recomputes an old result', () => {
    expect(solve(base, { kind: 'petz-up', alpha: 1.5 }).minTradeoff).toBeUndefined();
    const free = { ...base, constraints: [] };
    expect(solve(free, vonNeumann).minTradeoff).toBeUndefined();
    const { minTradeoff: _dropped, ...older } = result;
    expect(minTradeoffOf(base, older)).toEqual(g);
    // A Rényi result claiming one is refused.
    const renyi = solve(base, { kind: 'petz-up', alpha: 1.5 });
    expect(verifyResult(base, { kind: 'petz-up', alpha: 1.5 }, { ...renyi, minTradeoff: g }).valid).toBe(false);
  });
});
