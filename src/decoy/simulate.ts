// Counts a link would produce under the channel model: exact expectations, or binomial draws from a caller's
// random source (synthetic data for tests, benchmarks and the coverage study).
import { expectedGain, type ChannelParameters } from './channel.js';
import type { CountRecord, MeasuredCounts } from './counts.js';

export interface SimulationPlan {
  signal: number;
  decoys: number[];
  zBasisProbability: number;
  distancesKm: number[];
  /** Sifted pulses per intensity and basis in each session. */
  pulses: number;
}

/** A binomial draw: exact by inversion for small means, normal with rounding above (error far below the noise). */
export function binomialDraw(trials: number, p: number, uniform: () => number): number {
  const mean = trials * p;
  if (mean < 50) {
    // Poisson limit by inversion (trials ≫ mean here: p is a click probability per pulse).
    let k = 0;
    let term = Math.exp(-mean);
    let cumulative = term;
    const u = uniform();
    while (u > cumulative && k < trials) {
      k++;
      term *= mean / k;
      cumulative += term;
    }
    return k;
  }
  const z = Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
  return Math.min(trials, Math.max(0, Math.round(mean + z * Math.sqrt(mean * (1 - p)))));
}

/** Counts from the model; with `uniform` they are drawn, without it they are the (fractional) expectations. */
export function simulateCounts(
  channel: Omit<ChannelParameters, 'distanceKm'>,
  plan: SimulationPlan,
  uniform?: () => number,
): MeasuredCounts {
  const sessions = plan.distancesKm.map((distanceKm) => {
    const records: CountRecord[] = [];
    for (const basis of ['Z', 'X'] as const) {
      for (const intensity of [plan.signal, ...plan.decoys]) {
        const { gain, errorGain } = expectedGain({ ...channel, distanceKm }, intensity);
        if (uniform === undefined) {
          records.push({ intensity, basis, pulses: plan.pulses, detections: plan.pulses * gain, errors: plan.pulses * errorGain });
          continue;
        }
        const detections = binomialDraw(plan.pulses, gain, uniform);
        const errors = binomialDraw(detections, gain > 0 ? errorGain / gain : 0, uniform);
        records.push({ intensity, basis, pulses: plan.pulses, detections, errors });
      }
    }
    return { label: `${distanceKm} km`, distanceKm, records };
  });
  return { description: 'simulated', signal: plan.signal, decoys: plan.decoys, zBasisProbability: plan.zBasisProbability, known: {}, sessions };
}
