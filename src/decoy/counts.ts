// The measured-counts file of `decoy-rate --counts`: sessions of sifted pulse, detection and error counts per
// intensity and basis, read strictly with field-path errors (format in docs/decoy.md, "Measured counts").
import { ValidationError } from '../problem/errors.js';
import { JsonMessage, finiteNumber } from '../problem/json.js';
import type { Basis, IntensityObservation } from './bounds.js';
import type { ChannelParameters } from './channel.js';

/** Counts at one intensity in one basis, from rounds where Alice and Bob both chose that basis. */
export interface CountRecord {
  intensity: number;
  basis: Basis;
  pulses: number;
  detections: number;
  errors: number;
}

export interface CountSession {
  label: string;
  distanceKm: number;
  records: CountRecord[];
}

/** Channel parameters the fit must hold fixed (known from elsewhere, e.g. a fibre datasheet). */
export type FittedParameter = Exclude<keyof ChannelParameters, 'distanceKm'>;
export const FITTED_PARAMETERS: readonly FittedParameter[] = ['fiberLossDbPerKm', 'detectorEfficiency', 'darkCountYield', 'misalignment'];

export interface MeasuredCounts {
  description: string;
  signal: number;
  decoys: number[];
  zBasisProbability: number;
  known: Partial<Record<FittedParameter, number>>;
  sessions: CountSession[];
}

const TOP_FIELDS = ['description', 'signal', 'decoys', 'zBasisProbability', 'known', 'sessions'] as const;
const SESSION_FIELDS = ['label', 'distanceKm', 'counts'] as const;
const RECORD_FIELDS = ['intensity', 'basis', 'pulses', 'detections', 'errors'] as const;

function count(message: JsonMessage, name: string): number {
  const value = finiteNumber(message.required(name), message.field(name));
  if (!Number.isInteger(value) || value < 0 || value > Number.MAX_SAFE_INTEGER) {
    throw new ValidationError(message.field(name), `must be a whole number of events, 0 to 2^53 (got ${value})`);
  }
  return value;
}

function intensityValue(value: unknown, field: string): number {
  const x = finiteNumber(value, field);
  if (x < 0 || x > 20) throw new ValidationError(field, `must be a mean photon number in [0, 20] (got ${x})`);
  return x;
}

/** Reads and checks a measured-counts document; every defect names its field path. */
export function readMeasuredCounts(json: unknown, path = 'counts'): MeasuredCounts {
  const top = JsonMessage.read(json, path, TOP_FIELDS);
  const signal = intensityValue(top.required('signal'), top.field('signal'));
  if (signal === 0) throw new ValidationError(top.field('signal'), 'must be positive (the signal carries the key)');
  const decoys = top.list('decoys').map((d, i) => intensityValue(d, `${top.field('decoys')}[${i}]`));
  if (decoys.length === 0) throw new ValidationError(top.field('decoys'), 'must list at least one decoy intensity');
  const intensities = [signal, ...decoys];
  intensities.forEach((x, i) => {
    if (intensities.indexOf(x) !== i) throw new ValidationError(top.field('decoys'), `intensity ${x} is given twice`);
  });
  const zBasisProbability = top.get('zBasisProbability') === undefined ? 0.5 : top.number('zBasisProbability');
  if (!(zBasisProbability > 0 && zBasisProbability < 1)) {
    throw new ValidationError(top.field('zBasisProbability'), `must lie in (0, 1): both bases are needed (got ${zBasisProbability})`);
  }
  const known: Partial<Record<FittedParameter, number>> = {};
  const knownJson = top.get('known');
  if (knownJson !== undefined) {
    const k = JsonMessage.read(knownJson, top.field('known'), FITTED_PARAMETERS);
    for (const name of FITTED_PARAMETERS) if (k.get(name) !== undefined) known[name] = k.number(name);
  }
  const sessionsJson = top.list('sessions');
  if (sessionsJson.length === 0) throw new ValidationError(top.field('sessions'), 'must hold at least one session');
  const sessions = sessionsJson.map((s, i) => readSession(s, `${top.field('sessions')}[${i}]`, intensities));
  return { description: top.string('description'), signal, decoys, zBasisProbability, known, sessions };
}

function readSession(json: unknown, path: string, intensities: readonly number[]): CountSession {
  const session = JsonMessage.read(json, path, SESSION_FIELDS);
  const distanceKm = session.number('distanceKm', true);
  if (distanceKm < 0) throw new ValidationError(session.field('distanceKm'), `must not be negative (got ${distanceKm})`);
  const records = session.list('counts').map((r, j) => {
    const field = `${session.field('counts')}[${j}]`;
    const record = JsonMessage.read(r, field, RECORD_FIELDS);
    const intensity = intensityValue(record.required('intensity'), record.field('intensity'));
    if (!intensities.includes(intensity)) {
      throw new ValidationError(record.field('intensity'), `${intensity} is neither the signal nor a decoy (${intensities.join(', ')})`);
    }
    const basis = record.required('basis');
    if (basis !== 'Z' && basis !== 'X') throw new ValidationError(record.field('basis'), `must be "Z" or "X" (got ${JSON.stringify(basis)})`);
    const pulses = count(record, 'pulses');
    const detections = count(record, 'detections');
    const errors = count(record, 'errors');
    if (pulses === 0) throw new ValidationError(record.field('pulses'), 'must be positive');
    if (detections > pulses) throw new ValidationError(record.field('detections'), `must not exceed pulses (${detections} > ${pulses})`);
    if (errors > detections) throw new ValidationError(record.field('errors'), `must not exceed detections (${errors} > ${detections})`);
    return { intensity, basis, pulses, detections, errors } as CountRecord;
  });
  for (const basis of ['Z', 'X'] as const) {
    for (const intensity of intensities) {
      const matching = records.filter((r) => r.basis === basis && r.intensity === intensity);
      if (matching.length !== 1) {
        throw new ValidationError(
          session.field('counts'),
          `needs exactly one record for intensity ${intensity} in basis ${basis} (found ${matching.length})`,
        );
      }
    }
  }
  return { label: session.string('label'), distanceKm, records };
}

/** Observed gains Q = detections/pulses and error gains EQ = errors/pulses, per basis. */
export function observedGains(session: CountSession): Record<Basis, IntensityObservation[]> {
  const of = (basis: Basis) =>
    session.records
      .filter((r) => r.basis === basis)
      .map((r) => ({ intensity: r.intensity, gain: r.detections / r.pulses, errorGain: r.errors / r.pulses }));
  return { Z: of('Z'), X: of('X') };
}
