// Decoy-state LP bounds (docs/decoy.md): certificates re-checked by weak duality, bracketing of the simulated
// channel's true single-photon yield and error rate, and the published vacuum + weak decoy formulas.
import { beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { Highs } from 'highs';
import { basisBounds, DecoyInfeasibleError, lpSolver } from '../../src/decoy/bounds.js';
import { expectedGain, photonYield, type ChannelParameters } from '../../src/decoy/channel.js';
import { photonLp, poissonWeights, weakDualityBound } from '../../src/decoy/photon-lp.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004), as used by Ma, Qi, Zhao, Lo, PRA 72, 012326 (2005). */
const GYS = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };

function observations(channel: ChannelParameters, intensities: number[]) {
  return intensities.map((intensity) => ({ intensity, ...expectedGain(channel, intensity) }));
}

let highs: Highs;
beforeAll(async () => {
  highs = await lpSolver();
});

describe('Poisson weights (identity: Σₙ e^{−μ}μⁿ/n! = 1)', () => {
  for (const mu of [0, 0.01, 0.48, 1, 5]) {
    it(`μ = ${mu}: weights plus tail bound cover 1 from above by at most 1e-14`, () => {
      const { weights, tail } = poissonWeights(mu, 12);
      const total = weights.reduce((a, b) => a + b, 0) + tail;
      expect(total).toBeGreaterThanOrEqual(1 - 1e-15);
      expect(total).toBeLessThan(1 + 1e-14);
    });
  }
});

describe('weak duality re-checked here (any multipliers give a lower bound; common practice of LP duality)', () => {
  it('for random multipliers the recomputed dual objective never exceeds Y₁ of the true yields', () => {
    const channel = { distanceKm: 40, ...GYS };
    const rows = observations(channel, [0.5, 0.1, 0]).map((o) => ({ intensity: o.intensity, value: o.gain }));
    const lp = photonLp(rows, 12, 1, 'min');
    const trueY1 = photonYield(channel, 1).yield;
    fc.assert(
      fc.property(fc.array(fc.double({ min: -1e3, max: 1e3, noNaN: true }), { minLength: 3, maxLength: 3 }), (y) => {
        const { dualObjective, margin } = weakDualityBound(lp, y);
        expect(dualObjective - margin).toBeLessThanOrEqual(trueY1);
      }),
      { numRuns: 300, seed: 12 },
    );
  });

  it("HiGHS's duals certify a bound within 1e-9 of its primal optimum, on the safe side, with a positive margin", () => {
    const b = basisBounds(highs, 'Z', observations({ distanceKm: 80, ...GYS }, [0.48, 0.1, 0]));
    for (const [name, c] of Object.entries(b.certificates)) {
      const isLower = name.endsWith('Lower');
      expect(c.status).toBe('CERTIFIED');
      expect(c.margin).toBeGreaterThan(0);
      // The certificate is recomputed from the duals alone: re-evaluate it independently of certifiedLpBound.
      expect(isLower ? c.certifiedValue <= c.primalValue : c.certifiedValue >= c.primalValue).toBe(true);
      expect(Math.abs(c.certifiedValue - c.primalValue)).toBeLessThan(1e-9);
    }
  });
});

describe('bounds bracket the simulated channel (Lo, Ma, Chen 2005: any decoy set gives valid bounds)', () => {
  for (const distanceKm of [0, 50, 100, 140]) {
    for (const intensities of [
      [0.48, 0.1],
      [0.48, 0.1, 0],
      [0.48, 0.2, 0.05, 0],
    ]) {
      it(`${distanceKm} km, intensities ${intensities.join(', ')}`, () => {
        const channel = { distanceKm, ...GYS };
        const b = basisBounds(highs, 'X', observations(channel, intensities));
        const truth = photonYield(channel, 1);
        expect(b.yieldLower).toBeLessThanOrEqual(truth.yield);
        expect(b.yieldUpper).toBeGreaterThanOrEqual(truth.yield);
        expect(b.errorYieldUpper).toBeGreaterThanOrEqual(truth.errorYield);
        expect(b.errorRateUpper).toBeGreaterThanOrEqual(truth.errorYield / truth.yield);
      });
    }
  }
});

describe('vacuum + weak decoy: the LP is at least as tight as the closed form of Ma, Qi, Zhao, Lo, PRA 72, 012326 (2005)', () => {
  for (const distanceKm of [10, 60, 120]) {
    it(`${distanceKm} km`, () => {
      const mu = 0.48;
      const nu = 0.1;
      const channel = { distanceKm, ...GYS };
      const [qMu, qNu, q0] = observations(channel, [mu, nu, 0]);
      const y0 = q0.gain;
      // Y₁ ≥ μ/(μν − ν²)·(Q_ν e^ν − Q_μ e^μ ν²/μ² − (μ² − ν²)/μ²·Y₀)   (their Eq. (34), from memory)
      const y1Closed = (mu / (mu * nu - nu * nu)) * (qNu.gain * Math.exp(nu) - (qMu.gain * Math.exp(mu) * nu * nu) / (mu * mu) - ((mu * mu - nu * nu) / (mu * mu)) * y0);
      // e₁ ≤ (E_ν Q_ν e^ν − e₀Y₀)/(Y₁ᴸ ν)   (their Eq. (37), from memory)
      const e1Closed = (qNu.errorGain * Math.exp(nu) - 0.5 * y0) / (y1Closed * nu);
      const b = basisBounds(highs, 'Z', [qMu, qNu, q0]);
      // Equal in exact arithmetic when the LP's optimum is the closed form's vertex: allowed to differ by the
      // certificate's stated floating-point margin (plus the closed form's own rounding, 1e-12 relative).
      expect(b.yieldLower).toBeGreaterThanOrEqual(y1Closed * (1 - 1e-12) - b.certificates.yieldLower.margin);
      expect(b.yieldLower).toBeLessThan(y1Closed * 1.05);
      const errorMargin = (b.certificates.errorYieldUpper.margin + b.certificates.yieldLower.margin) / b.yieldLower;
      expect(b.errorRateUpper).toBeLessThanOrEqual(e1Closed * (1 + 1e-12) + 2 * errorMargin);
      expect(b.errorRateUpper).toBeGreaterThan(e1Closed * 0.9);
    });
  }
});

it('gains no photon-number yields can produce are refused as infeasible', () => {
  // A vacuum gain above the signal gain with zero errors everywhere but errors in the vacuum: impossible.
  const bad = [
    { intensity: 0.5, gain: 1e-3, errorGain: 0 },
    { intensity: 0, gain: 0.5, errorGain: 0.4 },
  ];
  expect(() => basisBounds(highs, 'Z', bad)).toThrow(DecoyInfeasibleError);
});
