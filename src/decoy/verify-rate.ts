// Re-checks a decoy-rate answer (the JSON `renyi-bound decoy-rate` and the DecoyRate RPC print) from its own
// numbers, without HiGHS or any optimisation (docs/decoy.md, "Verifying an answer"): every LP bound from its
// row duals by weak duality with the floating-point margin, the single-photon certificate against the problem
// rebuilt from those bounds, and the rate per pulse from the verified terms.
import { verifyResult } from '../certificate/verify.js';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { entropyRequestFrom } from '../problem/entropy-request.js';
import { inputHash } from '../problem/hash.js';
import type { EntropyRequest } from '../problem/model.js';
import { problemFromJson } from '../problem/validate.js';
import type { SolveResult } from '../result/types.js';
import { BASES, type Basis, type BasisBounds, type IntensityObservation } from './bounds.js';
import { expectedGain, type ChannelParameters } from './channel.js';
import { errorRateUpper, photonLp, weakDualityBound, type CertifiedLpBound } from './photon-lp.js';
import { analyticSinglePhoton, leakageOf, ratePerPulse, signalObservation, singlePhotonFraction, type RateProtocol } from './rate-terms.js';
import { scalesExactly, singlePhotonProblem, unscaledBound } from './single-photon.js';

export interface DecoyVerificationReport {
  valid: boolean;
  /** The first check that failed, or what was verified. */
  reason: string;
  /** The numbers as recomputed here (absent when a check failed before they were reached). */
  recomputed?: {
    singlePhotonYieldLower: number;
    singlePhotonErrorUpper: number;
    singlePhotonBound: number;
    ratePerPulse: number;
  };
}

/** A stated number that is not a bound must be reproduced up to this many roundings of its size. */
const REPRODUCED_ROUNDINGS = 16;

/** Thrown by a failed check; becomes { valid: false, reason }. */
class Invalid extends Error {}

function numberAt(value: unknown, path: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) throw new Invalid(`${path}: must be a finite number (got ${JSON.stringify(value)})`);
  return value;
}

function objectAt(value: unknown, path: string): Record<string, unknown> {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) throw new Invalid(`${path}: must be an object`);
  return value as Record<string, unknown>;
}

function arrayAt(value: unknown, path: string): unknown[] {
  if (!Array.isArray(value)) throw new Invalid(`${path}: must be an array`);
  return value;
}

/** |stated − recomputed| within REPRODUCED_ROUNDINGS roundings of the terms' size. */
function expectReproduced(path: string, stated: number, recomputed: number, size = Math.abs(recomputed)): void {
  if (!(Math.abs(stated - recomputed) <= REPRODUCED_ROUNDINGS * UNIT_ROUNDOFF * size)) {
    throw new Invalid(`${path}: states ${stated}, recomputed ${recomputed}`);
  }
}

/** A stated lower bound may be weaker than the certified one, never stronger (and likewise for upper bounds). */
function expectImplied(path: string, stated: number, certified: number, side: 'lower' | 'upper'): void {
  if (side === 'lower' ? stated > certified : stated < certified) {
    throw new Invalid(`${path}: states ${stated}, but its certificate proves only ${side === 'lower' ? '≥' : '≤'} ${certified}`);
  }
}

function readObservations(answer: Record<string, unknown>): Record<Basis, IntensityObservation[]> {
  const observations = objectAt(answer.observations, 'observations');
  const read = (basis: Basis) =>
    arrayAt(observations[basis], `observations.${basis}`).map((row, i) => {
      const r = objectAt(row, `observations.${basis}[${i}]`);
      const path = `observations.${basis}[${i}]`;
      return { intensity: numberAt(r.intensity, `${path}.intensity`), gain: numberAt(r.gain, `${path}.gain`), errorGain: numberAt(r.errorGain, `${path}.errorGain`) };
    });
  return { Z: read('Z'), X: read('X') };
}

function readProtocol(answer: Record<string, unknown>): RateProtocol & { decoys: number[] } {
  const protocol = objectAt(answer.protocol, 'protocol');
  return {
    signal: numberAt(protocol.signal, 'protocol.signal'),
    decoys: arrayAt(protocol.decoys, 'protocol.decoys').map((d, i) => numberAt(d, `protocol.decoys[${i}]`)),
    zBasisProbability: numberAt(protocol.zBasisProbability, 'protocol.zBasisProbability'),
    ecEfficiency: numberAt(protocol.ecEfficiency, 'protocol.ecEfficiency'),
  };
}

/** For an answer computed from a channel model, the observations must be the model's (Ma, Qi, Zhao, Lo 2005 gains). */
function checkChannelObservations(answer: Record<string, unknown>, observations: Record<Basis, IntensityObservation[]>): void {
  if (answer.source !== 'channel') return;
  const channel = objectAt(answer.channel, 'channel') as unknown as ChannelParameters;
  for (const basis of BASES) {
    observations[basis].forEach((row, i) => {
      const expected = expectedGain(channel, row.intensity);
      expectReproduced(`observations.${basis}[${i}].gain`, row.gain, expected.gain);
      expectReproduced(`observations.${basis}[${i}].errorGain`, row.errorGain, expected.errorGain);
    });
  }
}

const LP_BOUNDS = [
  { name: 'yieldLower', row: 'gain', sense: 'min' },
  { name: 'yieldUpper', row: 'gain', sense: 'max' },
  { name: 'errorYieldLower', row: 'errorGain', sense: 'min' },
  { name: 'errorYieldUpper', row: 'errorGain', sense: 'max' },
] as const;

/** The four LP bounds of one basis, each recomputed from its row duals by weak duality (photon-lp.ts). */
function verifyBasis(basis: Basis, stated: Record<string, unknown>, rows: readonly IntensityObservation[], cutoff: number): Omit<BasisBounds, 'certificates'> {
  const certificates = objectAt(stated.certificates, `bases.${basis}.certificates`);
  const certified: Record<string, number> = {};
  for (const { name, row, sense } of LP_BOUNDS) {
    const path = `bases.${basis}.certificates.${name}`;
    const claim = objectAt(certificates[name], path) as Partial<CertifiedLpBound>;
    const duals = arrayAt(claim.rowDuals, `${path}.rowDuals`).map((y, i) => numberAt(y, `${path}.rowDuals[${i}]`));
    if (duals.length !== rows.length) throw new Invalid(`${path}.rowDuals: ${duals.length} multipliers for ${rows.length} observed intensities`);
    const lp = photonLp(rows.map((o) => ({ intensity: o.intensity, value: o[row] })), cutoff, 1, sense);
    const { dualObjective, margin } = weakDualityBound(lp, duals);
    const sign = sense === 'min' ? 1 : -1;
    const value = sign * (dualObjective - margin);
    expectReproduced(`${path}.margin`, numberAt(claim.margin, `${path}.margin`), margin);
    expectReproduced(`${path}.dualObjective`, numberAt(claim.dualObjective, `${path}.dualObjective`), sign * dualObjective, Math.abs(dualObjective) + margin);
    expectImplied(`${path}.certifiedValue`, numberAt(claim.certifiedValue, `${path}.certifiedValue`), value, sense === 'min' ? 'lower' : 'upper');
    certified[name] = value;
  }
  // The stated interval ends are what the single-photon problem used: each must follow from its certificate.
  const bounds = {
    yieldLower: numberAt(stated.yieldLower, `bases.${basis}.yieldLower`),
    yieldUpper: numberAt(stated.yieldUpper, `bases.${basis}.yieldUpper`),
    errorYieldLower: numberAt(stated.errorYieldLower, `bases.${basis}.errorYieldLower`),
    errorYieldUpper: numberAt(stated.errorYieldUpper, `bases.${basis}.errorYieldUpper`),
    errorRateUpper: numberAt(stated.errorRateUpper, `bases.${basis}.errorRateUpper`),
  };
  expectImplied(`bases.${basis}.yieldLower`, bounds.yieldLower, Math.max(0, certified.yieldLower), 'lower');
  expectImplied(`bases.${basis}.yieldUpper`, bounds.yieldUpper, Math.min(1, certified.yieldUpper), 'upper');
  expectImplied(`bases.${basis}.errorYieldLower`, bounds.errorYieldLower, Math.max(0, certified.errorYieldLower), 'lower');
  expectImplied(`bases.${basis}.errorYieldUpper`, bounds.errorYieldUpper, Math.min(1, certified.errorYieldUpper), 'upper');
  expectImplied(`bases.${basis}.errorRateUpper`, bounds.errorRateUpper, errorRateUpper(bounds.errorYieldUpper, bounds.yieldLower), 'upper');
  return bounds;
}

/** The single-photon certificate, checked against the problem rebuilt from the verified intervals. */
function verifySinglePhoton(answer: Record<string, unknown>, bases: Record<Basis, Omit<BasisBounds, 'certificates'>>, zBasisProbability: number): number {
  const result = objectAt(answer.singlePhoton, 'singlePhoton') as unknown as SolveResult;
  let request: EntropyRequest;
  try {
    request = entropyRequestFrom(result.entropy, result.alpha ?? undefined);
  } catch (error) {
    throw new Invalid(`singlePhoton.entropy: ${(error as Error).message}`);
  }
  const scale = numberAt(answer.singlePhotonScale, 'singlePhotonScale');
  // Only some kinds map back exactly (docs/decoy.md, "Scaling of the single-photon problem").
  if (scale !== 1 && !scalesExactly(request)) throw new Invalid(`singlePhotonScale: must be 1 for ${request.kind} (got ${scale})`);
  let problemJson;
  try {
    problemJson = singlePhotonProblem(bases, zBasisProbability, scale);
  } catch (error) {
    throw new Invalid(`singlePhotonScale: ${(error as Error).message}`);
  }
  const problem = problemFromJson(problemJson);
  const report = verifyResult(problem, request, { ...result, certificate: result.certificate ?? null, inputHash: String(result.inputHash) });
  if (!report.valid || report.certifiedLowerBound === null) throw new Invalid(`singlePhoton: ${report.reason}`);
  if (answer.singlePhotonProblem !== undefined && result.certificate) {
    // The problem printed beside the result (for `verify --problem`) must be the one the bounds define.
    const { settings } = result.certificate;
    const stated = problemFromJson(answer.singlePhotonProblem);
    const solverVersion = result.certificate.solverVersion;
    if (inputHash(stated, request, settings, solverVersion) !== inputHash(problem, request, settings, solverVersion)) {
      throw new Invalid('singlePhotonProblem: is not the single-photon problem of the stated decoy intervals');
    }
  }
  const bound = unscaledBound(request, report.certifiedLowerBound, scale);
  expectImplied('singlePhotonBound', numberAt(answer.singlePhotonBound, 'singlePhotonBound'), bound, 'lower');
  return bound;
}

/** Verifies a single-point decoy-rate answer; a malformed answer is invalid with the field named. */
export function verifyDecoyRate(json: unknown): DecoyVerificationReport {
  try {
    const answer = objectAt(json, 'answer');
    if (answer.sweep !== undefined) {
      throw new Invalid('a sweep states its rates without per-point certificates; verify single points (decoy-rate without --sweep-distance or --fit)');
    }
    const protocol = readProtocol(answer);
    const observations = readObservations(answer);
    const intensities = [protocol.signal, ...protocol.decoys].sort((a, b) => a - b).join(',');
    for (const basis of BASES) {
      const seen = observations[basis].map((o) => o.intensity).sort((a, b) => a - b).join(',');
      if (seen !== intensities) throw new Invalid(`observations.${basis}: intensities ${seen} are not the protocol's ${intensities}`);
    }
    checkChannelObservations(answer, observations);
    const cutoff = numberAt(answer.cutoff, 'cutoff');
    if (!(Number.isInteger(cutoff) && cutoff >= 2 && cutoff <= 60)) throw new Invalid(`cutoff: must be an integer in [2, 60] (got ${cutoff})`);
    const statedBases = objectAt(answer.bases, 'bases');
    const bases = {
      Z: verifyBasis('Z', objectAt(statedBases.Z, 'bases.Z'), observations.Z, cutoff),
      X: verifyBasis('X', objectAt(statedBases.X, 'bases.X'), observations.X, cutoff),
    };
    expectImplied('singlePhotonYieldLower', numberAt(answer.singlePhotonYieldLower, 'singlePhotonYieldLower'), bases.Z.yieldLower, 'lower');
    expectImplied('singlePhotonErrorUpper', numberAt(answer.singlePhotonErrorUpper, 'singlePhotonErrorUpper'), bases.X.errorRateUpper, 'upper');
    const bound = verifySinglePhoton(answer, bases, protocol.zBasisProbability);

    // The rate per pulse from the verified terms.
    const fraction = singlePhotonFraction(protocol.signal);
    expectReproduced('singlePhotonFraction', numberAt(answer.singlePhotonFraction, 'singlePhotonFraction'), fraction);
    let signalRow: IntensityObservation;
    try {
      signalRow = signalObservation(protocol, observations);
    } catch (error) {
      throw new Invalid(`observations.Z: ${(error as Error).message}`);
    }
    const { leakage, errorRate } = leakageOf(protocol, signalRow);
    expectReproduced('leakage', numberAt(answer.leakage, 'leakage'), leakage);
    expectReproduced('signalGain', numberAt(answer.signalGain, 'signalGain'), signalRow.gain);
    expectReproduced('signalErrorRate', numberAt(answer.signalErrorRate, 'signalErrorRate'), errorRate);
    expectReproduced('analyticSinglePhotonBound', numberAt(answer.analyticSinglePhotonBound, 'analyticSinglePhotonBound'), analyticSinglePhoton(bases, protocol.zBasisProbability));
    const rate = ratePerPulse(fraction, bound, leakage);
    expectReproduced('ratePerPulse', numberAt(answer.ratePerPulse, 'ratePerPulse'), rate, Math.abs(fraction * bound) + leakage);
    return {
      valid: true,
      reason: 'verified: 8 LP bounds by weak duality with their margins, the single-photon certificate, the rate per pulse',
      recomputed: { singlePhotonYieldLower: bases.Z.yieldLower, singlePhotonErrorUpper: bases.X.errorRateUpper, singlePhotonBound: bound, ratePerPulse: rate },
    };
  } catch (error) {
    if (error instanceof Invalid) return { valid: false, reason: error.message };
    // A malformed matrix or problem inside the answer is an invalid answer too, with the library's reason.
    if (error instanceof Error) return { valid: false, reason: error.message };
    throw error;
  }
}
