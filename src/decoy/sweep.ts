// Key rate per pulse over distance from a channel model, optionally with the fit's uncertainty as a band
// (delta method on the analytic rate), and its vega-lite chart on a log axis (docs/decoy.md, "Sweeps").
import type { Highs } from 'highs';
import type { TopLevelSpec } from 'vega-lite';
import type { ChannelParameters } from './channel.js';
import type { ChannelFit } from './fit.js';
import { NORMAL_QUANTILE_95 } from './fit.js';
import { analyseDecoy, analyticRate, simulatedObservations, type DecoyAnalysisOptions, type DecoyProtocol } from './key-rate.js';

export interface SweepPoint {
  distanceKm: number;
  /** Certified-bound rate (numerical single-photon solve); null when the solve gave no bound. */
  ratePerPulse: number | null;
  status: string;
  singlePhotonYieldLower: number;
  singlePhotonErrorUpper: number;
  /** 95 % band of the rate from the fitted parameters' covariance (present only for fitted channels). */
  rateLower95?: number;
  rateUpper95?: number;
}

/** Distances from a "from:to:step" text, e.g. "0:150:10". */
export function distanceGrid(text: string, field: string, fail: (field: string, reason: string) => Error): number[] {
  const parts = text.split(':').map(Number);
  if (parts.length !== 3 || parts.some((x) => !Number.isFinite(x))) throw fail(field, `must be from:to:step in km (got ${JSON.stringify(text)})`);
  const [from, to, step] = parts;
  if (from < 0 || to < from || step <= 0) throw fail(field, `needs 0 ≤ from ≤ to and step > 0 (got ${text})`);
  const count = Math.floor((to - from) / step + 1e-9) + 1;
  if (count > 1000) throw fail(field, `asks for ${count} distances (at most 1000)`);
  return Array.from({ length: count }, (_, i) => from + i * step);
}

/** ±1.96σ of the analytic rate by the delta method (central differences along each free parameter). */
function rateBand(highs: Highs, channel: ChannelParameters, protocol: DecoyProtocol, fit: ChannelFit): [number, number] {
  const rateAt = (c: ChannelParameters) => analyticRate(highs, protocol, simulatedObservations(c, protocol));
  const center = rateAt(channel);
  const gradient = fit.free.map((p) => {
    const h = Math.max(fit.parameters[p].standardError, Math.abs(channel[p]) * 1e-6) * 1e-2;
    const up = rateAt({ ...channel, [p]: channel[p] + h });
    const down = rateAt({ ...channel, [p]: Math.max(0, channel[p] - h) });
    return (up - down) / (channel[p] + h - Math.max(0, channel[p] - h));
  });
  let variance = 0;
  fit.free.forEach((_, a) => fit.free.forEach((__, b) => (variance += gradient[a] * fit.covariance[a][b] * gradient[b])));
  const half = NORMAL_QUANTILE_95 * Math.sqrt(Math.max(variance, 0));
  return [center - half, center + half];
}

export function sweepDistance(
  highs: Highs,
  channel: Omit<ChannelParameters, 'distanceKm'>,
  protocol: DecoyProtocol,
  distances: number[],
  options: DecoyAnalysisOptions = {},
  fit?: ChannelFit,
): SweepPoint[] {
  return distances.map((distanceKm) => {
    const at = { ...channel, distanceKm };
    const result = analyseDecoy(highs, protocol, simulatedObservations(at, protocol), options);
    const point: SweepPoint = {
      distanceKm,
      ratePerPulse: result.ratePerPulse,
      status: result.singlePhoton.status,
      singlePhotonYieldLower: result.singlePhotonYieldLower,
      singlePhotonErrorUpper: result.singlePhotonErrorUpper,
    };
    if (fit !== undefined) [point.rateLower95, point.rateUpper95] = rateBand(highs, at, protocol, fit);
    return point;
  });
}

/** Key rate per pulse against distance on a log axis; the band (when present) is the fit's 95 % interval. */
export function sweepChartSpec(points: SweepPoint[], title: string): TopLevelSpec {
  // A log axis shows only positive rates; points without key are left out (they are in the JSON).
  const values = points
    .filter((p) => p.ratePerPulse !== null && p.ratePerPulse > 0)
    .map((p) => ({ ...p, bandLower: p.rateLower95 !== undefined ? Math.max(p.rateLower95, p.ratePerPulse! * 1e-3) : undefined }));
  const x = { field: 'distanceKm', type: 'quantitative' as const, title: 'distance (km)' };
  const y = { type: 'quantitative' as const, scale: { type: 'log' as const }, title: 'key rate per pulse (bits)' };
  const layers: object[] = [];
  if (values.some((v) => v.rateUpper95 !== undefined)) {
    layers.push({ mark: { type: 'area', opacity: 0.25 }, encoding: { x, y: { ...y, field: 'bandLower' }, y2: { field: 'rateUpper95' } } });
  }
  layers.push({ mark: { type: 'line', point: true }, encoding: { x, y: { ...y, field: 'ratePerPulse' } } });
  return {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title,
    width: 520,
    height: 320,
    data: { values },
    layer: layers,
  } as TopLevelSpec;
}
