// The fibre link of a weak-coherent-pulse BB84 system: expected gains and error rates per intensity and basis,
// and the photon-number yields they come from (docs/decoy.md, "Channel model").
import { ValidationError } from '../problem/errors.js';

/** The handful of numbers that describe a link (Lo, Ma, Chen 2005; Ma, Qi, Zhao, Lo 2005). */
export interface ChannelParameters {
  distanceKm: number;
  fiberLossDbPerKm: number;
  detectorEfficiency: number;
  /** Y₀: probability of a click when no signal photon arrives (dark counts, stray light). */
  darkCountYield: number;
  /** e_det: probability that an arriving photon lands in the wrong detector. */
  misalignment: number;
}

/** Error rate of a click that carries no signal photon: a random bit (common practice). */
export const BACKGROUND_ERROR_RATE = 0.5;

/** Total transmittance η = η_det·10^(−αL/10). */
export function transmittance(channel: ChannelParameters): number {
  return channel.detectorEfficiency * 10 ** ((-channel.fiberLossDbPerKm * channel.distanceKm) / 10);
}

/**
 * n-photon yield and error yield: with probability (1−η)^n no signal photon arrives and the background clicks
 * with probability Y₀ at random; otherwise a photon arrives and is wrong with probability e_det.
 * Y_n = 1 − (1−Y₀)(1−η)^n, e_nY_n = e_det·η_n + e₀Y₀(1−η_n), η_n = 1 − (1−η)^n.
 */
export function photonYield(channel: ChannelParameters, n: number): { yield: number; errorYield: number } {
  const eta = transmittance(channel);
  const etaN = -Math.expm1(n * Math.log1p(-eta));
  return {
    yield: etaN + (1 - etaN) * channel.darkCountYield,
    errorYield: channel.misalignment * etaN + BACKGROUND_ERROR_RATE * channel.darkCountYield * (1 - etaN),
  };
}

/**
 * Gain Q_μ = Σ_n e^{−μ}μⁿ/n!·Y_n = 1 − (1−Y₀)e^{−ημ} and error gain E_μQ_μ = e_det(1 − e^{−ημ}) + e₀Y₀e^{−ημ}
 * (the Poisson sums of photonYield in closed form). The model is the same in both bases.
 */
export function expectedGain(channel: ChannelParameters, intensity: number): { gain: number; errorGain: number } {
  const eta = transmittance(channel);
  const arrives = -Math.expm1(-eta * intensity);
  return {
    gain: arrives + (1 - arrives) * channel.darkCountYield,
    errorGain: channel.misalignment * arrives + BACKGROUND_ERROR_RATE * channel.darkCountYield * (1 - arrives),
  };
}

/** Range checks of a channel, with the option or field name in the error. */
export function checkChannel(channel: ChannelParameters, names: Record<keyof ChannelParameters, string>): void {
  const within = (key: keyof ChannelParameters, low: number, high: number) => {
    const value = channel[key];
    if (!Number.isFinite(value) || value < low || value > high) {
      throw new ValidationError(names[key], `must be a number in [${low}, ${high}] (got ${value})`);
    }
  };
  within('distanceKm', 0, 1e4);
  within('fiberLossDbPerKm', 0, 100);
  within('detectorEfficiency', 0, 1);
  within('darkCountYield', 0, 1);
  within('misalignment', 0, 0.5);
}

/** Shannon binary entropy in bits. */
export function binaryEntropy(p: number): number {
  if (p <= 0 || p >= 1) return 0;
  return -p * Math.log2(p) - (1 - p) * Math.log2(1 - p);
}
