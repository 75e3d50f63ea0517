// Score optimisation for prepare-and-measure BB84 with loss (docs/finite-size.md, "Starting scores" and "Score
// ascent"): the least-variance member of the min-tradeoff class is equivalent on every allowed state (checked on the
// operators themselves), and the ascent beats both its start and a derivative-free reference, a grid over one score,
// every point a certified h^f_α.
import { describe, expect, it, vi } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { ComplexMatrix, addScaledInPlace, frobeniusNorm, kron, partialTraceB } from '../../src/linear-algebra/complex-matrix.js';
import { minTradeoffScores } from '../../src/finite-size/key-length.js';
import { branchOperators, leastVarianceScores } from '../../src/finite-size/score-equivalence.js';
import { ascendScores } from '../../src/finite-size/optimise.js';
import { acceptanceWindow } from '../../src/finite-size/acceptance-window.js';
import { localSolver, singleRoundValue } from '../../src/finite-size/single-round.js';

vi.setConfig({ testTimeout: 180_000 });

const SETTINGS = { gapTolerance: 1e-6, maxIterations: 40 };
const pm = problemFromJson(
  buildExample('bb84-prepare-measure', { qber: 0.02, transmittance: 0.5, 'z-basis-probability': 0.5, 'test-probability': 0.1 }),
);
const honest = pm.honestStatistics!.branchProbabilities;
const bb84 = problemFromJson(buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.02, 'test-probability': 0.02 }));

const mean = (p: readonly number[], f: readonly number[]) => f.reduce((acc, x, c) => acc + p[c] * x, 0);
const variance = (p: readonly number[], f: readonly number[]) => f.reduce((acc, x, c) => acc + p[c] * (x - mean(p, f)) ** 2, 0);

describe('equivalent scores', () => {
  it('prepare-and-measure: the difference is X_A ⊗ 1_B (fixed by the source marginal), the variance halves', async () => {
    const start = await minTradeoffScores(pm, honest, localSolver, SETTINGS);
    // minTradeoffScores already returns the least-variance member; the dual's own coefficients are one step back.
    const shifted = start.map((f, c) => f + (c === 6 || c === 7 ? 10 : 0) + (c === 2 || c === 3 ? -3 : 0));
    const quiet = leastVarianceScores(pm, shifted, honest);
    const difference = new ComplexMatrix(pm.dimensionA * pm.dimensionB, pm.dimensionA * pm.dimensionB);
    branchOperators(pm).forEach((m, c) => addScaledInPlace(difference, m, quiet[c] - shifted[c]));
    // Σ_c a_c M_c = X_A ⊗ 1_B: Tr((X_A ⊗ 1)ρ) = Tr(X_A ρ_A) is the same for every state with the source marginal.
    const marginalPart = kron(partialTraceB(difference, pm.dimensionA, pm.dimensionB), ComplexMatrix.identity(pm.dimensionB));
    addScaledInPlace(marginalPart, difference, -pm.dimensionB);
    expect(frobeniusNorm(marginalPart)).toBeLessThan(1e-9 * pm.dimensionB);
    expect(mean(honest, quiet)).toBeCloseTo(mean(honest, shifted), 10);
    expect(variance(honest, quiet)).toBeLessThanOrEqual(variance(honest, shifted));
    expect(variance(honest, start)).toBeLessThan(0.6 * 33.7); // the dual's coefficients had 33.7 (docs/finite-size.md)
  });

  it('entangled BB84 (no source marginal): the difference is a multiple of 1 (key rounds are a fixed fraction)', () => {
    const p = bb84.honestStatistics!.branchProbabilities;
    const scores = [0, 5.5, -270];
    const quiet = leastVarianceScores(bb84, scores, p);
    const difference = new ComplexMatrix(4, 4);
    branchOperators(bb84).forEach((m, c) => addScaledInPlace(difference, m, quiet[c] - scores[c]));
    const multiple = difference.re[0];
    addScaledInPlace(difference, ComplexMatrix.identity(4), -multiple);
    expect(frobeniusNorm(difference)).toBeLessThan(1e-9);
    // The only freedom is how the score is split between key and test rounds; the test outcomes keep their difference.
    expect(quiet[1] - quiet[2]).toBeCloseTo(scores[1] - scores[2], 9);
    expect(variance(p, quiet)).toBeLessThanOrEqual(variance(p, scores));
  });
});

describe('score ascent, prepare-and-measure BB84 with loss (q = 2 %, η = 0.5, γ = 0.1), α = 1.001, n = 1e9', () => {
  it('gains over its start and over the best point of a derivative-free grid on f(test-x-error)', async () => {
    const rounds = 1e9;
    const alpha = 1.001;
    const start = await minTradeoffScores(pm, honest, localSolver, SETTINGS);
    const value = async (f: number[]) => {
      const single = await singleRoundValue(pm, 'sandwiched-up', alpha, f, SETTINGS, localSolver, undefined, false);
      return single.bound! + acceptanceWindow(honest, f, rounds, 1e-2).minimumScoreSum / rounds;
    };
    const atStart = await value(start);
    const grid: number[] = [];
    for (const delta of [-4, -2, -1, 1, 2]) grid.push(await value(start.map((f, c) => (c === 7 ? f + delta : f))));
    // The reference finds a better f than the start: the start is not optimal (the ascent must move).
    expect(Math.max(...grid)).toBeGreaterThan(atStart);
    const context = {
      problem: pm,
      kind: 'sandwiched-up' as const,
      rounds,
      epsilonCompleteness: 1e-2,
      honest,
      fixedCost: () => 0,
      settings: SETTINGS,
      solver: localSolver,
    };
    const ascended = await ascendScores(context, { solves: 0 }, alpha, start);
    expect(ascended.single.result.status === 'CERTIFIED' || ascended.single.result.status === 'LIMIT_REACHED').toBe(true);
    expect(ascended.value).toBeGreaterThan(Math.max(...grid));
  });
});
