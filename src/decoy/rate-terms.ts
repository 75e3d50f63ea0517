// The terms of the asymptotic key rate per signal pulse (docs/decoy.md, "Key rate"), shared by the analysis and
// by its verifier: single-photon fraction, error-correction leakage, the analytic single-photon value, the rate.
import type { Basis, BasisBounds, IntensityObservation } from './bounds.js';
import { binaryEntropy } from './channel.js';

/** The protocol numbers the rate needs. */
export interface RateProtocol {
  signal: number;
  zBasisProbability: number;
  ecEfficiency: number;
}

/** P(n = 1 | μ) = μe^{−μ}: the share of signal pulses that carry exactly one photon. */
export function singlePhotonFraction(signal: number): number {
  return signal * Math.exp(-signal);
}

/** The Z-basis observation at the signal intensity (the only pulses that make key). */
export function signalObservation(protocol: RateProtocol, observations: Record<Basis, readonly IntensityObservation[]>): IntensityObservation {
  const row = observations.Z.find((o) => o.intensity === protocol.signal);
  if (row === undefined) throw new RangeError(`no Z-basis observation at the signal intensity ${protocol.signal}`);
  return row;
}

/** Leakage p_Z²·Q_μ·f·h(E_μ) of the Z-basis signal detections, and E_μ. */
export function leakageOf(protocol: RateProtocol, signalRow: IntensityObservation): { leakage: number; errorRate: number } {
  const errorRate = signalRow.gain > 0 ? signalRow.errorGain / signalRow.gain : 0;
  const pz = protocol.zBasisProbability;
  return { leakage: pz * pz * signalRow.gain * protocol.ecEfficiency * binaryEntropy(errorRate), errorRate };
}

/**
 * p_Z²·Y·(1 − h(e)) with Y = max(Y₁ᴸ_Z, Y₁ᴸ_X) (the source fixes one single-photon yield for both bases) and
 * e = (e₁Y₁)ᵁ_X / Y: the von Neumann value of the single-photon problem by Shor–Preskill / GLLP.
 */
export function analyticSinglePhoton(bases: Record<Basis, Pick<BasisBounds, 'yieldLower' | 'errorYieldUpper'>>, zBasisProbability: number): number {
  const y = Math.max(bases.Z.yieldLower, bases.X.yieldLower);
  if (y <= 0) return 0;
  const e = Math.min(0.5, bases.X.errorYieldUpper / y);
  return zBasisProbability * zBasisProbability * y * (1 - binaryEntropy(e));
}

/** μe^{−μ}·B₁ − leakage: bits per signal pulse (negative: no key). */
export function ratePerPulse(fraction: number, singlePhotonBound: number, leakage: number): number {
  return fraction * singlePhotonBound - leakage;
}
