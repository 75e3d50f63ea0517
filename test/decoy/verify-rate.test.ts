// A decoy-rate answer re-checked from its own numbers (docs/decoy.md, "Verifying an answer"): LP bounds by weak
// duality of linear programming (Boyd & Vandenberghe, Convex Optimization (2004), §5.2.2 — common practice), the
// single-photon certificate, the rate per pulse; every tampered number is refused with its field named.
import { beforeAll, describe, expect, it } from 'vitest';
import type { Highs } from 'highs';
import { formatJson } from '../../src/cli/io.js';
import { lpSolver } from '../../src/decoy/bounds.js';
import { photonYield } from '../../src/decoy/channel.js';
import { HARBOUR_COUNTS } from '../../src/decoy/demo-scenario.js';
import { decoyRate, type DecoyRateRequest } from '../../src/decoy/request.js';
import { verifyDecoyRate } from '../../src/decoy/verify-rate.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004). */
const GYS = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };
const PROTOCOL = { signal: 0.48, decoys: [0.1, 0], zBasisProbability: 0.5, ecEfficiency: 1.22 };

let highs: Highs;
/** The answer as a file holds it: printed and read back. */
type Answer = Record<string, any>;
let channelAnswer: Answer;
beforeAll(async () => {
  highs = await lpSolver();
  channelAnswer = asFile(decoyRate(highs, { channel: { distanceKm: 50, ...GYS }, protocol: PROTOCOL }));
}, 60_000);

const asFile = (answer: unknown): Answer => JSON.parse(formatJson(answer)) as Answer;
const copy = (answer: Answer): Answer => structuredClone(answer);

describe('verify a decoy-rate answer', () => {
  it('a 50 km answer from the channel verifies, and its recomputed Y₁ᴸ, e₁ᵁ bracket the channel\'s true single-photon yield and error rate (Lo, Ma, Chen 2005)', () => {
    const report = verifyDecoyRate(channelAnswer);
    expect(report.reason).toMatch(/^verified/);
    expect(report.valid).toBe(true);
    expect(report.recomputed!.ratePerPulse).toBe(channelAnswer.ratePerPulse);
    const truth = photonYield({ distanceKm: 50, ...GYS }, 1);
    expect(report.recomputed!.singlePhotonYieldLower).toBeLessThanOrEqual(truth.yield);
    expect(report.recomputed!.singlePhotonErrorUpper).toBeGreaterThanOrEqual(truth.errorYield / truth.yield);
  });

  it('an answer from measured counts verifies', () => {
    const counts = { ...HARBOUR_COUNTS, sessions: HARBOUR_COUNTS.sessions.slice(0, 1) };
    const request: DecoyRateRequest = { channel: { distanceKm: 0, ...GYS }, protocol: PROTOCOL, counts };
    const report = verifyDecoyRate(asFile(decoyRate(highs, request)));
    expect(report.reason).toMatch(/^verified/);
  }, 60_000);

  it('a Rényi answer (Petz-up, α = 1.5, 50 km, scaled problem) verifies; a scale is refused for sandwiched-up, which has no exact map back', () => {
    const answer = asFile(decoyRate(highs, { channel: { distanceKm: 50, ...GYS }, protocol: PROTOCOL, entropy: { kind: 'petz-up', alpha: 1.5 } }));
    expect(answer.singlePhotonScale).toBeLessThan(1);
    const report = verifyDecoyRate(answer);
    expect(report.reason).toMatch(/^verified/);
    expect(report.recomputed!.singlePhotonBound).toBe(answer.singlePhotonBound);
    const renamed = copy(answer);
    renamed.singlePhoton.entropy = 'sandwiched-up';
    expect(verifyDecoyRate(renamed).reason).toMatch(/^singlePhotonScale: must be 1 for sandwiched-up/);
  }, 60_000);

  const tampering: [string, (a: Answer) => void, RegExp][] = [
    ['a higher rate', (a) => (a.ratePerPulse *= 1.001), /^ratePerPulse: states/],
    ['a stronger LP bound', (a) => (a.bases.Z.certificates.yieldLower.certifiedValue *= 1.0001), /^bases\.Z\.certificates\.yieldLower\.certifiedValue: .*proves only ≥/],
    ['changed LP duals', (a) => (a.bases.X.certificates.errorYieldUpper.rowDuals[0] *= 0.9), /^bases\.X\.certificates\.errorYieldUpper\.(margin|dualObjective)/],
    ['a smaller margin', (a) => (a.bases.Z.certificates.yieldUpper.margin /= 2), /^bases\.Z\.certificates\.yieldUpper\.margin/],
    ['a lower error yield bound', (a) => (a.bases.X.errorYieldUpper *= 0.999), /^bases\.X\.errorYieldUpper: .*proves only ≤/],
    ['a lower single-photon error rate', (a) => (a.singlePhotonErrorUpper *= 0.999), /^singlePhotonErrorUpper/],
    ['a higher single-photon bound', (a) => (a.singlePhotonBound *= 1.0001), /^singlePhotonBound: .*proves only ≥/],
    ['a higher solver bound', (a) => (a.singlePhoton.certifiedLowerBound *= 1.0001), /^singlePhoton: /],
    ['a scale too small to be exact', (a) => (a.singlePhotonScale /= 8), /^singlePhotonScale: .*not be exact/],
    ['another single-photon problem', (a) => (a.singlePhotonProblem.constraints[1].upper *= 1.01), /^singlePhotonProblem: is not the single-photon problem/],
    ['observed gains the channel does not give', (a) => (a.observations.Z[0].gain *= 1.01), /^observations\.Z\[0\]\.gain: states/],
    ['a missing intensity', (a) => a.observations.X.pop(), /^observations\.X: intensities/],
    ['a missing field', (a) => delete a.leakage, /^leakage: must be a finite number/],
  ];
  for (const [what, tamper, reason] of tampering) {
    it(`${what} is invalid, with the reason`, () => {
      const answer = copy(channelAnswer);
      tamper(answer);
      const report = verifyDecoyRate(answer);
      expect(report.valid).toBe(false);
      expect(report.reason).toMatch(reason);
    });
  }

  it('a sweep is refused: its points carry no certificates', () => {
    const answer = asFile(decoyRate(highs, { channel: { distanceKm: 0, ...GYS }, protocol: PROTOCOL, sweepDistancesKm: [100] }));
    const report = verifyDecoyRate(answer);
    expect(report.valid).toBe(false);
    expect(report.reason).toMatch(/^a sweep states its rates without per-point certificates/);
  }, 60_000);
});
