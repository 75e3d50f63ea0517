// Key-length checks against outside references: Shor–Preskill's asymptotic rate, the score-shift identity, the
// i.i.d. upper reference, and the Dupuis–Fawzi–Renner continuity bound (docs/finite-size.md, "Checks").
import { describe, expect, it, vi } from 'vitest';
import { bellDiagonal } from '../objectives/fixtures.js';
import { createObjective } from '../../src/objectives/index.js';
import { buildExample } from '../../src/protocols/index.js';
import { binaryEntropy } from '../../src/protocols/test-rounds.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { keyLength, splitEpsilons } from '../../src/finite-size/key-length.js';
import { optimiseTestProbability } from '../../src/finite-size/sweep.js';
import { acceptanceWindow } from '../../src/finite-size/acceptance-window.js';
import { keyLengthLedger } from '../../src/finite-size/ledger.js';
import { localSolver, scoredProblem, singleRoundValue } from '../../src/finite-size/single-round.js';

// Key-length searches run dozens of single-round solves; on a shared machine that can take a while.
vi.setConfig({ testTimeout: 180_000, hookTimeout: 60_000 });

const Q = 0.02;
const GAMMA = 0.02;
const bb84 = problemFromJson(buildExample('bb84-entangled', { 'qber-z': Q, 'qber-x': Q, 'test-probability': GAMMA }));
/** Shor & Preskill, PRL 85, 441 (2000): 1 − 2h(Q) per key round; key rounds are a fraction 1 − γ. */
const SHOR_PRESKILL = (1 - GAMMA) * (1 - 2 * binaryEntropy(Q));
const SETTINGS = { gapTolerance: 1e-6, maxIterations: 40 };

/** Bell-diagonal honest state with Z and X error rates Q: weights (1−Q)², Q(1−Q), Q(1−Q), Q² on Φ+, Φ−, Ψ+, Ψ−. */
const honestState = (q: number) => bellDiagonal([(1 - q) ** 2, q * (1 - q), q * (1 - q), q * q]);

/** The fixed-length ledger at given (α, f) without any optimisation. */
async function ledgerAt(alpha: number, scores: number[], rounds: number) {
  const single = await singleRoundValue(bb84, 'sandwiched-up', alpha, scores, SETTINGS, localSolver);
  const window = acceptanceWindow(bb84.honestStatistics!.branchProbabilities, scores, rounds, 1e-2);
  const ledger = keyLengthLedger({
    rounds,
    alpha,
    singleRoundBound: single.bound!,
    scoreSum: window.minimumScoreSum,
    errorCorrectionBits: rounds * binaryEntropy(Q) * (1 - GAMMA),
    epsilons: splitEpsilons({ rounds }),
  });
  return { single, window, ledger };
}

describe('finite-size key length, entangled BB84 with testing', () => {
  it('is unchanged when a constant is added to every score (derived identity), up to the certified gaps', async () => {
    const scores = [0, 5.5, -270];
    const rounds = 1e8;
    const base = await ledgerAt(1.0002, scores, rounds);
    for (const k of [-40, 3]) {
      const shifted = await ledgerAt(1.0002, scores.map((f) => f + k), rounds);
      const allowance = rounds * ((base.single.result.gap ?? 0) + (shifted.single.result.gap ?? 0)) + 1;
      expect(Math.abs(shifted.ledger.keyLength - base.ledger.keyLength)).toBeLessThanOrEqual(allowance);
      // The single-round bound itself moves by exactly −k (README, "Scores").
      expect(shifted.single.bound! - base.single.bound!).toBeCloseTo(-k, 5);
    }
  });

  it('approaches 1 − 2h(Q) (Shor–Preskill 2000) from below, non-decreasing in n; within 1 % from n = 1e8', async () => {
    const rates: number[] = [];
    for (const rounds of [1e5, 1e6, 1e8, 1e10]) {
      const report = await keyLength(bb84, { rounds, ecEfficiency: 1, withoutAsymptotic: rounds !== 1e10 });
      rates.push(report.ratePerRound);
      expect(report.ratePerRound).toBeLessThan(SHOR_PRESKILL);
      if (report.asymptotic) expect(report.asymptotic.ratePerRound!).toBeCloseTo(SHOR_PRESKILL, 5);
      // Every term is on its own line and adds up to the key length.
      const total = report.terms.reduce((a, t) => a + t.bits, 0);
      expect(report.keyLength).toBe(Math.max(0, Math.floor(total)));
    }
    for (let i = 1; i < rates.length; i++) expect(rates[i]).toBeGreaterThanOrEqual(rates[i - 1]);
    expect(rates[0]).toBeGreaterThan(0);
    expect((SHOR_PRESKILL - rates[2]) / SHOR_PRESKILL).toBeLessThan(0.01);
    expect((SHOR_PRESKILL - rates[1]) / SHOR_PRESKILL).toBeGreaterThan(0.01);
  });

  it('lies below the i.i.d. upper reference: the same ledger with h^f_α at the honest state (derived)', async () => {
    const rounds = 1e7;
    const report = await keyLength(bb84, { rounds, withoutAsymptotic: true });
    const scores = bb84.branches.map((b) => report.scores[b.label]);
    const objective = createObjective(scoredProblem(bb84, scores), { kind: 'sandwiched-up', alpha: report.alpha });
    const atHonest = objective.evaluate(honestState(Q)).value;
    expect(atHonest).toBeGreaterThanOrEqual(report.singleRoundBound.certifiedLowerBound!);
    const singleTerm = report.terms[0].bits;
    const iid = report.terms.reduce((a, t) => a + t.bits, 0) - singleTerm + rounds * atHonest;
    expect(Math.floor(iid)).toBeGreaterThanOrEqual(report.keyLength);
  });

  it('approaches the von Neumann bound as α → 1 no slower than Dupuis–Fawzi–Renner Lemma B.9 (from memory): (α−1)·log²(1+2d_S)', () => {
    // The plain problem (statistics as constraints, no scores); d_S = 2 key values.
    const plain = problemFromJson(buildExample('bb84-entangled', { 'qber-z': 0.05, 'qber-x': 0.05 }));
    const vonNeumann = 1 - binaryEntropy(0.05); // Shor–Preskill
    const constant = Math.log2(1 + 2 * 2) ** 2;
    for (const alpha of [1.001, 1.01, 1.05]) {
      // Gap 1e-9: the inner τ tolerance shrinks with (α−1)/(2α−1) (docs/finite-size.md §9), so α = 1.001 certifies.
      const result = solve(plain, { kind: 'sandwiched-up', alpha }, { gapTolerance: 1e-9 });
      expect(result.status).toBe('CERTIFIED');
      const upper = result.upperBound!;
      expect(upper).toBeLessThanOrEqual(vonNeumann + 1e-7); // H̃↑_α ≤ H for α > 1 (Tomamichel 2016, ch. 5)
      expect(vonNeumann - result.certifiedLowerBound!).toBeLessThanOrEqual((alpha - 1) * constant);
    }
  });

  it('Petz-up (--fast) lies below sandwiched-up at the same α and scores (Araki–Lieb–Thirring; Tomamichel 2016, ch. 5)', async () => {
    const scores = [0, 5.5, -270];
    for (const alpha of [1.001, 1.1]) {
      const petz = await singleRoundValue(bb84, 'petz-up', alpha, scores, SETTINGS, localSolver);
      const sandwiched = await singleRoundValue(bb84, 'sandwiched-up', alpha, scores, SETTINGS, localSolver);
      expect(petz.bound!).toBeLessThanOrEqual(sandwiched.result.upperBound! + 1e-9);
    }
  });

  it('returns the variable-length rule ℓ(F) = ⌊F + intercept⌋ that reproduces the fixed length at the window edge', async () => {
    const report = await keyLength(bb84, { rounds: 1e8, alpha: 1.0002, variableLength: true, withoutAsymptotic: true });
    const rule = report.variableLength!;
    expect(Math.floor(report.acceptanceWindow.minimumScoreSum + rule.intercept)).toBe(report.keyLength);
    expect(rule.keyLengthAtHonestMean).toBeGreaterThan(report.keyLength);
  });

  it('optimising γ beats the fixed test probabilities it brackets (optional γ search)', async () => {
    const build = (gamma: number) =>
      problemFromJson(buildExample('bb84-entangled', { 'qber-z': Q, 'qber-x': Q, 'test-probability': gamma }));
    const { testProbability, report } = await optimiseTestProbability(build, { rounds: 1e8, ecEfficiency: 1 });
    expect(testProbability).toBeGreaterThan(1e-4);
    expect(testProbability).toBeLessThan(0.5);
    for (const gamma of [0.001, 0.1]) {
      const fixed = await keyLength(build(gamma), { rounds: 1e8, ecEfficiency: 1, withoutAsymptotic: true });
      expect(report.ratePerRound).toBeGreaterThanOrEqual(fixed.ratePerRound);
    }
    // Still below Shor–Preskill's rate at the chosen γ.
    expect(report.ratePerRound).toBeLessThan((1 - testProbability) * (1 - 2 * binaryEntropy(Q)));
  });

  it('rejects inputs with the field and the reason', async () => {
    const plain = problemFromJson(buildExample('bb84-entangled'));
    await expect(keyLength(plain, { rounds: 1e6 })).rejects.toThrow(/honestStatistics/);
    await expect(keyLength(bb84, { rounds: 0 })).rejects.toThrow(/rounds/);
    await expect(keyLength(bb84, { rounds: 1e6, alpha: 2.5 })).rejects.toThrow(/alpha/);
    await expect(keyLength(bb84, { rounds: 1e6, epsilonSecrecy: 1e-10, epsilonPrivacyAmplification: 1e-10 })).rejects.toThrow(
      /epsilon-error-verification/,
    );
  });
});
