// Decoy-state key rate (docs/decoy.md): the published reach with the Gobby–Yuan–Shields channel, the numerical
// single-photon bound against Shor–Preskill's 1 − h(e₁), and monotonicity in the decoy set.
import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Highs } from 'highs';
import { lpSolver } from '../../src/decoy/bounds.js';
import { binaryEntropy } from '../../src/decoy/channel.js';
import { analyseDecoy, analyticRate, infiniteDecoyRate, simulatedObservations, type DecoyProtocol } from '../../src/decoy/key-rate.js';
import { singlePhotonProblem } from '../../src/decoy/single-photon.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004): 0.21 dB/km, η_det 4.5 %, Y₀ 1.7e-6, e_det 3.3 %; f = 1.22. */
const GYS = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };
const protocolWith = (signal: number, decoys: number[], zBasisProbability = 0.5): DecoyProtocol => ({ signal, decoys, zBasisProbability, ecEfficiency: 1.22 });

let highs: Highs;
beforeAll(async () => {
  highs = await lpSolver();
});

/** Largest distance with a positive rate when μ is chosen best at each distance (grid 0.01 on [0.3, 0.6], where the optimum lies), by bisection. */
function reach(rate: (distanceKm: number, mu: number) => number): number {
  const best = (d: number) => Math.max(...Array.from({ length: 31 }, (_, i) => rate(d, 0.3 + 0.01 * i)));
  let low = 130;
  let high = 150;
  while (high - low > 0.25) {
    const mid = (low + high) / 2;
    if (best(mid) > 0) low = mid;
    else high = mid;
  }
  return low;
}

describe('reach with the GYS channel (Ma, Qi, Zhao, Lo, PRA 72, 012326 (2005); Ma, MSc report, quant-ph/0503057: "over 140 km")', () => {
  it('the infinite-decoy rate reaches about 140 km and vacuum + weak decoy (ν = 0.01) comes within 2 km of it', () => {
    const infinite = reach((d, mu) => infiniteDecoyRate({ distanceKm: d, ...GYS }, protocolWith(mu, [])));
    const twoDecoy = reach((d, mu) => {
      const p = protocolWith(mu, [0.01, 0]);
      return analyticRate(highs, p, simulatedObservations({ distanceKm: d, ...GYS }, p));
    });
    expect(infinite).toBeGreaterThan(138);
    expect(infinite).toBeLessThan(146);
    expect(twoDecoy).toBeLessThanOrEqual(infinite + 0.25);
    expect(infinite - twoDecoy).toBeLessThan(2);
  }, 120_000);
});

describe('numerical single-photon bound = p_Z²·Y₁ᴸ·(1 − h(e₁ᵁ)) (Shor & Preskill 2000; GLLP 2004) to 1e-6', () => {
  // Gobby–Yuan–Shields channel at every distance the decoy rate is quoted for; 25–100 km stalled before the
  // von Neumann problem was scaled (docs/decoy.md, "Scaling of the single-photon problem").
  for (const [distanceKm, pz] of [
    [0, 0.5],
    [10, 0.5],
    [0, 0.8],
    [25, 0.5],
    [50, 0.5],
    [75, 0.5],
    [100, 0.5],
    [100, 0.8],
  ]) {
    it(`${distanceKm} km, p_Z = ${pz}: CERTIFIED, bound per key-branch weight within 1e-6 of 1 − h(e₁ᵁ), verified`, () => {
      const p = protocolWith(0.48, [0.1, 0], pz);
      const result = analyseDecoy(highs, p, simulatedObservations({ distanceKm, ...GYS }, p));
      expect(result.singlePhoton.status).toBe('CERTIFIED');
      const weight = pz * pz * Math.max(result.bases.Z.yieldLower, result.bases.X.yieldLower);
      const analytic = 1 - binaryEntropy(result.bases.X.errorYieldUpper / (weight / (pz * pz)));
      expect(result.singlePhotonBound!).toBeLessThanOrEqual(result.analyticSinglePhotonBound * (1 + 1e-9));
      expect(Math.abs(result.singlePhotonBound! / weight - analytic)).toBeLessThan(1e-6);
      expect(result.singlePhotonBound).toBe(result.singlePhotonScale * result.singlePhoton.certifiedLowerBound!);
      const problem = problemFromJson(singlePhotonProblem(result.bases, pz, result.singlePhotonScale));
      expect(verifyResult(problem, { kind: 'von-neumann' }, result.singlePhoton).valid).toBe(true);
    }, 60_000);
  }

  it('the scaled problem has the value of the unscaled one (0 km, both certified): s·min(scaled) = min(original)', () => {
    const p = protocolWith(0.48, [0.1, 0]);
    const result = analyseDecoy(highs, p, simulatedObservations({ distanceKm: 0, ...GYS }, p));
    expect(result.singlePhotonScale).toBeLessThan(1);
    const unscaled = solve(problemFromJson(singlePhotonProblem(result.bases, 0.5, 1)), { kind: 'von-neumann' }, { gapTolerance: 1e-9 });
    expect(unscaled.gap!).toBeLessThan(1e-8);
    const s = result.singlePhotonScale;
    // Each interval [lower, upper] holds the true minimum of its problem; scaled by s they must overlap.
    expect(s * result.singlePhoton.certifiedLowerBound!).toBeLessThanOrEqual(unscaled.upperBound!);
    expect(unscaled.certifiedLowerBound!).toBeLessThanOrEqual(s * result.singlePhoton.upperBound!);
  }, 60_000);

  it('Petz kinds (α = 1.5) at 100 km: CERTIFIED on the scaled problem, H̄↓ ≤ H̄↑ ≤ 1 − h(e₁ᵁ) per weight (ordering of the kinds, Tomamichel 2016)', () => {
    const p = protocolWith(0.48, [0.1, 0]);
    const obs = simulatedObservations({ distanceKm: 100, ...GYS }, p);
    const up = analyseDecoy(highs, p, obs, { entropy: { kind: 'petz-up', alpha: 1.5 } });
    const down = analyseDecoy(highs, p, obs, { entropy: { kind: 'petz-down', alpha: 1.5 } });
    for (const r of [up, down]) {
      expect(r.singlePhoton.status).toBe('CERTIFIED');
      expect(r.singlePhotonScale).toBeLessThan(1);
      expect(r.singlePhotonBound!).toBeGreaterThan(0);
      expect(r.singlePhotonUpperBound! - r.singlePhotonBound!).toBeLessThan(1e-6 * r.singlePhotonBound!);
    }
    expect(down.singlePhotonBound!).toBeLessThanOrEqual(up.singlePhotonUpperBound!);
    expect(up.singlePhotonBound!).toBeLessThanOrEqual(up.analyticSinglePhotonBound);
  }, 120_000);

  for (const kind of ['petz-up', 'petz-down'] as const) {
    it(`${kind} α = 1.5 at 25 km: the scaled problem mapped back by c·log₂(1 + s(2^{v/c} − 1)) agrees with the unscaled problem within both intervals`, () => {
      const p = protocolWith(0.48, [0.1, 0]);
      const entropy = { kind, alpha: 1.5 };
      const scaled = analyseDecoy(highs, p, simulatedObservations({ distanceKm: 25, ...GYS }, p), { entropy });
      const unscaled = solve(problemFromJson(singlePhotonProblem(scaled.bases, 0.5, 1)), entropy, { gapTolerance: 1e-9, timeLimitMs: 20_000 });
      expect(unscaled.gap!).toBeLessThan(1e-5 * unscaled.certifiedLowerBound!);
      expect(scaled.singlePhotonBound!).toBeLessThanOrEqual(unscaled.upperBound!);
      expect(unscaled.certifiedLowerBound!).toBeLessThanOrEqual(scaled.singlePhotonUpperBound!);
    }, 120_000);
  }

  it('a Rényi kind (Petz, α = 1.5) gives a certified bound below von Neumann (ordering of the kinds, Tomamichel 2016)', () => {
    const p = protocolWith(0.48, [0.1, 0], 0.8);
    const obs = simulatedObservations({ distanceKm: 0, ...GYS }, p);
    const renyi = analyseDecoy(highs, p, obs, { entropy: { kind: 'petz-up', alpha: 1.5 } });
    expect(renyi.singlePhotonBound).not.toBeNull();
    expect(renyi.singlePhotonBound!).toBeLessThanOrEqual(renyi.analyticSinglePhotonBound);
    expect(renyi.singlePhotonBound!).toBeGreaterThan(0);
  }, 60_000);
});

describe('more decoys never lower the rate (Lo, Ma, Chen 2005: extra constraints only shrink the LP feasible set)', () => {
  for (const distanceKm of [20, 90, 130]) {
    it(`${distanceKm} km: nested decoy sets give non-decreasing rates, all below the infinite-decoy rate`, () => {
      const channel = { distanceKm, ...GYS };
      const sets = [[0.1], [0.1, 0], [0.1, 0.05, 0], [0.2, 0.1, 0.05, 0]];
      const rates = sets.map((decoys) => {
        const p = protocolWith(0.48, decoys);
        return analyticRate(highs, p, simulatedObservations(channel, p));
      });
      for (let i = 1; i < rates.length; i++) expect(rates[i]).toBeGreaterThanOrEqual(rates[i - 1] - 1e-15);
      expect(rates.at(-1)!).toBeLessThanOrEqual(infiniteDecoyRate(channel, protocolWith(0.48, [])) + 1e-15);
    });
  }
});

describe('more decoys never lower the rate: seeded property over links, signals, decoy sets and supersets (Lo, Ma, Chen 2005)', () => {
  /** Intensities on a 0.01 grid up to 0.6 (0 is the vacuum decoy); the first k form the set, all of them the superset. */
  const decoyPool = fc.uniqueArray(fc.integer({ min: 0, max: 60 }).map((k) => k / 100), { minLength: 2, maxLength: 5 });
  const link = fc.record({
    distanceKm: fc.integer({ min: 0, max: 150 }),
    signal: fc.integer({ min: 20, max: 90 }).map((k) => k / 100),
    zBasisProbability: fc.constantFrom(0.5, 0.7, 0.9),
    subsetSize: fc.integer({ min: 1, max: 4 }),
    pool: decoyPool,
  });
  type Link = { distanceKm: number; signal: number; zBasisProbability: number; subsetSize: number; pool: number[] };
  /** `analyse` on the first decoys of the pool and on all of them (the signal left out); skips draws without a proper subset. */
  function onNestedSets<T>(l: Link, analyse: (p: DecoyProtocol, observations: ReturnType<typeof simulatedObservations>) => T): [T, T] {
    const superset = l.pool.filter((x) => x !== l.signal);
    const subset = superset.slice(0, Math.min(l.subsetSize, superset.length - 1));
    fc.pre(subset.length >= 1);
    const channel = { distanceKm: l.distanceKm, ...GYS };
    const run = (decoys: number[]) => {
      const p = protocolWith(l.signal, decoys, l.zBasisProbability);
      return analyse(p, simulatedObservations(channel, p));
    };
    return [run(subset), run(superset)];
  }

  it('analytic single-photon term: rate(superset) ≥ rate(subset) (each LP of the superset has the subset\'s rows and more)', () => {
    fc.assert(
      fc.property(link, (l) => {
        const [small, large] = onNestedSets(l, (p, observations) => analyticRate(highs, p, observations));
        expect(large).toBeGreaterThanOrEqual(small);
      }),
      { numRuns: 100, seed: 20261202 },
    );
  }, 120_000);

  it('certified single-photon bound: rate(superset) + μe^{−μ}·(its upper − lower bound) ≥ rate(subset), since B_subset ≤ min_subset ≤ min_superset ≤ upper_superset', () => {
    fc.assert(
      fc.property(link, (l) => {
        const [small, large] = onNestedSets(l, (p, observations) => analyseDecoy(highs, p, observations, { settings: { timeLimitMs: 3000 } }));
        expect(small.ratePerPulse).not.toBeNull();
        expect(large.ratePerPulse).not.toBeNull();
        // Upper end for the superset's minimum: F at the solver's final state, or (when the bound is the trivial 0
        // and no upper bound is stated) the Shor–Preskill value p_Z²·Y₁ᴸ(1 − h(e₁ᵁ)), which a state attains.
        const upper = large.singlePhotonUpperBound ?? large.analyticSinglePhotonBound;
        expect(small.singlePhotonBound!).toBeLessThanOrEqual(upper);
        expect(large.ratePerPulse! + large.singlePhotonFraction * (upper - large.singlePhotonBound!)).toBeGreaterThanOrEqual(small.ratePerPulse!);
      }),
      { numRuns: 12, seed: 20261203 },
    );
  }, 300_000);
});
