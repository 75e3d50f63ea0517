// The rate over n: for fixed (α, f) the ledger's rate does not decrease in n, and a sweep that re-optimises α and f
// at every n keeps that property (docs/finite-size.md §5, "The rate over n", derived there).
import { describe, expect, it, vi } from 'vitest';
import { seededRandom } from '../helpers/random.js';
import { acceptanceWindow } from '../../src/finite-size/acceptance-window.js';
import { keyLength, splitEpsilons } from '../../src/finite-size/key-length.js';
import { keyLengthLedger } from '../../src/finite-size/ledger.js';
import { keyLengthSweep } from '../../src/finite-size/sweep.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { buildExample } from '../../src/protocols/index.js';

// Every sweep point is a key-length search of dozens of single-round solves; on a shared machine that takes a while.
vi.setConfig({ testTimeout: 240_000 });

/** ℓ/n for one certified single-round value h at fixed (α, f): the window is the only n-dependent solve-free part. */
function ledgerRate(rounds: number, alpha: number, h: number, honest: number[], scores: number[], leakagePerRound: number) {
  const window = acceptanceWindow(honest, scores, rounds, 1e-2);
  const ledger = keyLengthLedger({
    rounds,
    alpha,
    singleRoundBound: h,
    scoreSum: window.minimumScoreSum,
    errorCorrectionBits: leakagePerRound * rounds,
    epsilons: splitEpsilons({ rounds }),
  });
  return { unrounded: ledger.unrounded / rounds, rounded: ledger.keyLength / rounds };
}

describe('key rate over n', () => {
  it('for fixed (α, f) does not decrease in n (derived identity, docs/finite-size.md §5), random scores and statistics', () => {
    const rng = seededRandom(9);
    for (let example = 0; example < 40; example++) {
      const m = 2 + Math.floor(rng() * 6);
      const weights = Array.from({ length: m }, () => rng() + 1e-3);
      const total = weights.reduce((a, b) => a + b, 0);
      const honest = weights.map((w) => w / total);
      const scores = Array.from({ length: m }, () => (rng() - 0.5) * 40);
      const alpha = 1 + 10 ** (-4 + 4 * rng());
      const h = rng();
      const leakage = 0.3 * rng();
      let previous = ledgerRate(1e3, alpha, h, honest, scores, leakage);
      for (let exponent = 4; exponent <= 13; exponent++) {
        const next = ledgerRate(10 ** exponent, alpha, h, honest, scores, leakage);
        // Before rounding every n-dependent term is non-increasing in n; rounded, ℓ/n keeps that for n' = 10·n.
        expect(next.unrounded).toBeGreaterThanOrEqual(previous.unrounded);
        expect(next.rounded).toBeGreaterThanOrEqual(previous.rounded);
        previous = next;
      }
    }
  });
});

describe('sweep over n with α and f re-optimised at every n', () => {
  /**
   * Rates must not fall from one n to the next, a multiple of it: the comparison is with the derived identity of
   * docs/finite-size.md §5 (for fixed (α, f) ℓ/n does not decrease when n is multiplied by an integer, so the
   * re-optimised maximum does not either); every rate stays below the certified Devetak–Winter rate.
   */
  function expectNonDecreasing(points: Awaited<ReturnType<typeof keyLengthSweep>>) {
    for (let k = 1; k < points.length; k++) {
      expect(points[k].rounds % points[k - 1].rounds).toBe(0);
      expect(points[k].ratePerRound).toBeGreaterThanOrEqual(points[k - 1].ratePerRound);
    }
    for (const p of points) expect(p.ratePerRound).toBeLessThan(p.asymptoticRatePerRound!);
  }

  it('entangled BB84 (Q = 2 %, γ = 0.02), n = 1e4 … 1e12', async () => {
    const bb84 = problemFromJson(buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.02, 'test-probability': 0.02 }));
    const rounds = Array.from({ length: 9 }, (_, k) => 10 ** (4 + k));
    expectNonDecreasing(await keyLengthSweep([{ label: 'bb84', problem: bb84 }], rounds, {}));
  });

  it('prepare-and-measure BB84 with loss (q = 2 %, η = 0.5, γ = 0.1), n = 1e10 … 1e12', async () => {
    const pm = problemFromJson(
      buildExample('bb84-prepare-measure', { qber: 0.02, transmittance: 0.5, 'z-basis-probability': 0.5, 'test-probability': 0.1 }),
    );
    expectNonDecreasing(await keyLengthSweep([{ label: 'pm', problem: pm }], [1e10, 1e11, 1e12], {}));
  });
});

describe('a candidate from another n', () => {
  it('is re-checked by verify: a changed bound is refused with the field, the genuine one is kept when it wins', async () => {
    const bb84 = problemFromJson(buildExample('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.02, 'test-probability': 0.02 }));
    const first = await keyLength(bb84, { rounds: 1e7, withoutAsymptotic: true });
    const scores = bb84.branches.map((b) => first.scores[b.label]);
    const genuine = { alpha: first.alpha, scores, singleRoundBound: first.singleRoundBound };
    const claimed = first.singleRoundBound.certifiedLowerBound! + 1e-3;
    const forged = { ...genuine, singleRoundBound: { ...first.singleRoundBound, certifiedLowerBound: claimed } };
    await expect(keyLength(bb84, { rounds: 1e8, candidate: forged, withoutAsymptotic: true })).rejects.toThrow(/candidate\.singleRoundBound/);
    // At the same n the candidate is the search's own optimum: it cannot lose to a search that reproduces it.
    const again = await keyLength(bb84, { rounds: 1e7, candidate: genuine, withoutAsymptotic: true });
    expect(again.ratePerRound).toBeGreaterThanOrEqual(first.ratePerRound);
  });
});
