// One decoy-rate request as the command line and the RPC both see it, and the answer they both print: a single
// point (from a channel or from measured counts), a fit of the channel to counts, and a sweep over distance.
import type { Highs } from 'highs';
import { ValidationError } from '../problem/errors.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import type { EntropyRequest } from '../problem/model.js';
import { checkChannel, type ChannelParameters } from './channel.js';
import { observedGains, type MeasuredCounts } from './counts.js';
import { fitChannel, type ChannelFit } from './fit.js';
import { analyseDecoy, simulatedObservations, type DecoyProtocol, type DecoyRateResult } from './key-rate.js';
import { sweepDistance, type SweepPoint } from './sweep.js';

export const CAUTION =
  'Asymptotic rate (infinitely many pulses; no finite-size terms for the decoy estimates). A rate from a fitted or ' +
  'simulated channel is an estimate, not a security claim for a device; a key length is only as good as the device ' +
  'model and supports, not replaces, a security evaluation under the applicable standards.';

export interface DecoyRateRequest {
  /** Channel parameters (ignored for the observations when `counts` is given without `fit`). */
  channel: ChannelParameters;
  protocol: DecoyProtocol;
  counts?: MeasuredCounts;
  /** Which session of `counts` to analyse (needed when there are several). */
  session?: number;
  fit?: boolean;
  sweepDistancesKm?: number[];
  entropy?: EntropyRequest;
  cutoff?: number;
  settings?: Partial<SolverSettings>;
}

/** The printed answer; the field names are part of the interface (scripts read them). */
export interface DecoyRateAnswer extends Partial<DecoyRateResult> {
  source: 'channel' | 'counts' | 'fit';
  channel?: ChannelParameters;
  protocol: DecoyProtocol;
  session?: { index: number; label: string; distanceKm: number };
  fit?: ChannelFit;
  sweep?: SweepPoint[];
  caution: string;
}

const CHANNEL_NAMES = {
  distanceKm: 'distance-km',
  fiberLossDbPerKm: 'fiber-loss-db-per-km',
  detectorEfficiency: 'detector-efficiency',
  darkCountYield: 'dark-count-yield',
  misalignment: 'misalignment',
};

export function checkProtocol(protocol: DecoyProtocol, names = { signal: 'signal', decoys: 'decoys', zBasisProbability: 'z-basis-probability', ecEfficiency: 'ec-efficiency' }): void {
  if (!(protocol.signal > 0 && protocol.signal <= 20)) throw new ValidationError(names.signal, `must be a mean photon number in (0, 20] (got ${protocol.signal})`);
  if (protocol.decoys.length === 0) throw new ValidationError(names.decoys, 'must list at least one decoy intensity');
  protocol.decoys.forEach((d, i) => {
    if (!(d >= 0 && d <= 20)) throw new ValidationError(`${names.decoys}[${i}]`, `must be a mean photon number in [0, 20] (got ${d})`);
    if (d === protocol.signal || protocol.decoys.indexOf(d) !== i) throw new ValidationError(`${names.decoys}[${i}]`, `repeats intensity ${d}`);
  });
  if (!(protocol.zBasisProbability > 0 && protocol.zBasisProbability < 1)) {
    throw new ValidationError(names.zBasisProbability, `must lie in (0, 1) (got ${protocol.zBasisProbability})`);
  }
  if (!(protocol.ecEfficiency >= 1 && protocol.ecEfficiency <= 10)) throw new ValidationError(names.ecEfficiency, `must lie in [1, 10] (got ${protocol.ecEfficiency})`);
}

export function decoyRate(highs: Highs, request: DecoyRateRequest): DecoyRateAnswer {
  const options = { entropy: request.entropy, cutoff: request.cutoff, settings: request.settings };
  if (request.counts !== undefined) {
    const counts = request.counts;
    const protocol = { ...request.protocol, signal: counts.signal, decoys: counts.decoys, zBasisProbability: counts.zBasisProbability };
    if (request.fit) {
      const fit = fitChannel(counts);
      const channel = Object.fromEntries(Object.entries(fit.parameters).map(([k, v]) => [k, v.value])) as Omit<ChannelParameters, 'distanceKm'>;
      const distances = request.sweepDistancesKm ?? [request.channel.distanceKm];
      const sweep = sweepDistance(highs, channel, protocol, distances, options, fit);
      return { source: 'fit', protocol, fit, sweep, channel: { ...channel, distanceKm: distances[0] }, caution: CAUTION };
    }
    if (request.sweepDistancesKm !== undefined) throw new ValidationError('sweep-distance', 'needs --fit with --counts (measured counts hold no other distance)');
    const index = request.session ?? (counts.sessions.length === 1 ? 0 : undefined);
    if (index === undefined) {
      throw new ValidationError('session', `the counts hold ${counts.sessions.length} sessions; choose one (0 to ${counts.sessions.length - 1})`);
    }
    if (!(Number.isInteger(index) && index >= 0 && index < counts.sessions.length)) {
      throw new ValidationError('session', `must be an index from 0 to ${counts.sessions.length - 1} (got ${index})`);
    }
    const session = counts.sessions[index];
    const result = analyseDecoy(highs, protocol, observedGains(session), options);
    return {
      source: 'counts',
      protocol,
      session: { index, label: session.label, distanceKm: session.distanceKm },
      ...result,
      caution: CAUTION,
    };
  }
  checkChannel(request.channel, CHANNEL_NAMES);
  checkProtocol(request.protocol);
  if (request.fit) throw new ValidationError('fit', 'needs --counts (a fit needs measured data)');
  if (request.sweepDistancesKm !== undefined) {
    const sweep = sweepDistance(highs, request.channel, request.protocol, request.sweepDistancesKm, options);
    return { source: 'channel', channel: request.channel, protocol: request.protocol, sweep, caution: CAUTION };
  }
  const result = analyseDecoy(highs, request.protocol, simulatedObservations(request.channel, request.protocol), options);
  return { source: 'channel', channel: request.channel, protocol: request.protocol, ...result, caution: CAUTION };
}
