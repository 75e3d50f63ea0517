import { describe, expect, it } from 'vitest';
import { acceptanceWindow } from '../../src/finite-size/acceptance-window.js';

/** Kullback–Leibler divergence of Bernoulli(a) from Bernoulli(p), in nats. */
function bernoulliDivergence(a: number, p: number): number {
  return a * Math.log(a / p) + (1 - a) * Math.log((1 - a) / (1 - p));
}

/** Exact Pr[Binomial(n, p) ≤ k], summed in log space. */
function binomialLowerTail(n: number, p: number, k: number): number {
  let logPmf = n * Math.log(1 - p); // j = 0
  let total = 0;
  for (let j = 0; j <= k; j++) {
    total += Math.exp(logPmf);
    logPmf += Math.log((n - j) / (j + 1)) + Math.log(p / (1 - p));
  }
  return total;
}

describe('acceptance window (Cramér–Chernoff)', () => {
  it('for 0/1 scores reproduces the Chernoff–Hoeffding bound n·D(μ − t/n ‖ μ) = ln(1/ε_com) (Hoeffding 1963)', () => {
    for (const [p, n, eps] of [
      [0.97, 1e4, 1e-2],
      [0.5, 1e6, 1e-10],
      [0.9, 1e9, 1e-3],
    ]) {
      const w = acceptanceWindow([1 - p, p], [0, 1], n, eps);
      const a = p - w.deviation / n;
      expect(n * bernoulliDivergence(a, p)).toBeCloseTo(Math.log(1 / eps), 6);
      expect(w.minimumScoreSum).toBeCloseTo(n * a, 3);
    }
  });

  it('keeps the exact binomial abort probability of an honest run at most ε_com', () => {
    for (const [p, n, eps] of [
      [0.95, 2000, 1e-2],
      [0.7, 5000, 1e-6],
    ]) {
      const w = acceptanceWindow([1 - p, p], [0, 1], n, eps);
      // Abort when the score sum (the number of 1s) falls below n·μ − t.
      const abort = binomialLowerTail(n, p, Math.ceil(w.minimumScoreSum) - 1);
      expect(abort).toBeLessThanOrEqual(eps);
      // And the window is not wastefully wide: the Chernoff bound is tight to within a modest factor at these n.
      expect(abort).toBeGreaterThan(eps / 1000);
    }
  });

  it('is invariant under a common shift of the scores and scales with them (derived identities)', () => {
    const p = [0.9, 0.07, 0.03];
    const f = [0.1, 12, -240];
    const n = 1e7;
    const w = acceptanceWindow(p, f, n, 1e-2);
    const shifted = acceptanceWindow(p, f.map((x) => x + 3.5), n, 1e-2);
    expect(shifted.deviation).toBeCloseTo(w.deviation, 6);
    expect(shifted.minimumScoreSum - w.minimumScoreSum).toBeCloseTo(3.5 * n, 3);
    const doubled = acceptanceWindow(p, f.map((x) => 2 * x), n, 1e-2);
    expect(doubled.deviation / w.deviation).toBeCloseTo(2, 9);
  });

  it('has the envelope gradient n·(p − r) (central finite differences)', () => {
    const p = [0.9, 0.07, 0.03];
    const f = [0.1, 12, -240];
    const n = 1e6;
    const w = acceptanceWindow(p, f, n, 1e-2);
    for (let c = 0; c < 3; c++) {
      const h = 1e-4 * Math.max(1, Math.abs(f[c]));
      const up = acceptanceWindow(p, f.map((x, k) => (k === c ? x + h : x)), n, 1e-2).deviation;
      const down = acceptanceWindow(p, f.map((x, k) => (k === c ? x - h : x)), n, 1e-2).deviation;
      expect(w.deviationGradient[c]).toBeCloseTo((up - down) / (2 * h), 0);
    }
  });
});
