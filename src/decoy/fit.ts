// The channel model fitted to measured counts by weighted least squares (ml-levenberg-marquardt), with each
// parameter's standard error from the Jacobian at the optimum (docs/decoy.md, "Fitting the channel").
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { Matrix, SingularValueDecomposition, inverse } from 'ml-matrix';
import { ValidationError } from '../problem/errors.js';
import { transmittance, BACKGROUND_ERROR_RATE, type ChannelParameters } from './channel.js';
import { FITTED_PARAMETERS, type FittedParameter, type MeasuredCounts } from './counts.js';

/** Two-sided 95 % quantile of the standard normal distribution. */
export const NORMAL_QUANTILE_95 = 1.959963984540054;

/** Columns of the normalised Jacobian closer to dependent than this are refused as unidentifiable. */
export const IDENTIFIABILITY_THRESHOLD = 1e-6;

export interface FittedValue {
  value: number;
  standardError: number;
  interval95: [number, number];
  fixed: boolean;
}

export interface FitResidual {
  session: number;
  intensity: number;
  basis: 'Z' | 'X';
  quantity: 'correctGain' | 'errorGain';
  observed: number;
  expected: number;
  /** (observed − expected)/σ. */
  normalized: number;
}

export interface ChannelFit {
  parameters: Record<FittedParameter, FittedValue>;
  /** Covariance of the free parameters, in the order of `free`. */
  free: FittedParameter[];
  covariance: number[][];
  residuals: FitResidual[];
  chiSquare: number;
  degreesOfFreedom: number;
  reducedChiSquare: number;
  iterations: number;
}

/** One data point: a gain or an error gain with its binomial standard deviation. */
interface DataPoint {
  session: number;
  distanceKm: number;
  intensity: number;
  basis: 'Z' | 'X';
  quantity: 'correctGain' | 'errorGain';
  observed: number;
  sigma: number;
}

function dataPoints(counts: MeasuredCounts): DataPoint[] {
  const points: DataPoint[] = [];
  counts.sessions.forEach((session, s) => {
    for (const r of session.records) {
      // Correct and wrong detections are two cells of one multinomial (nearly independent at small gains);
      // detections and errors would be strongly correlated (errors are a subset).
      for (const quantity of ['correctGain', 'errorGain'] as const) {
        const events = quantity === 'correctGain' ? r.detections - r.errors : r.errors;
        const p = events / r.pulses;
        // Binomial variance at the observed frequency, floored at one event so an empty cell keeps a finite weight.
        const variance = (Math.max(p, 1 / r.pulses) * (1 - p)) / r.pulses;
        points.push({ session: s, distanceKm: session.distanceKm, intensity: r.intensity, basis: r.basis, quantity, observed: p, sigma: Math.sqrt(variance) });
      }
    }
  });
  return points;
}

/** Model value and its gradient with respect to the four channel parameters (order of FITTED_PARAMETERS). */
function modelWithGradient(channel: ChannelParameters, point: DataPoint): { value: number; gradient: number[] } {
  const eta = transmittance(channel);
  const survive = Math.exp(-eta * point.intensity);
  const dEta = [(-eta * point.distanceKm * Math.LN10) / 10, channel.detectorEfficiency > 0 ? eta / channel.detectorEfficiency : 0];
  const y0 = channel.darkCountYield;
  const e = channel.misalignment;
  const dEdEta = (e - BACKGROUND_ERROR_RATE * y0) * point.intensity * survive;
  const errorGain = e * (1 - survive) + BACKGROUND_ERROR_RATE * y0 * survive;
  const errorGradient = [dEdEta * dEta[0], dEdEta * dEta[1], BACKGROUND_ERROR_RATE * survive, 1 - survive];
  if (point.quantity === 'errorGain') return { value: errorGain, gradient: errorGradient };
  // Correct gain = Q − EQ with Q = 1 − (1−Y₀)e^{−ημ}.
  const dQdEta = (1 - y0) * point.intensity * survive;
  const gainGradient = [dQdEta * dEta[0], dQdEta * dEta[1], survive, 0];
  return { value: 1 - (1 - y0) * survive - errorGain, gradient: gainGradient.map((g, k) => g - errorGradient[k]) };
}

/** Starting values from the data: e_det from the signal's error rate, Y₀ from the lowest gain, η from the signal. */
function initialGuess(counts: MeasuredCounts): Record<FittedParameter, number> {
  const nearest = counts.sessions.reduce((a, b) => (b.distanceKm < a.distanceKm ? b : a));
  const signal = nearest.records.find((r) => r.intensity === counts.signal && r.basis === 'Z')!;
  const q = signal.detections / signal.pulses;
  const lowest = Math.min(...nearest.records.map((r) => r.detections / r.pulses));
  const loss = counts.known.fiberLossDbPerKm ?? 0.2;
  const eta = Math.max(-Math.log1p(-Math.min(q, 0.999)) / counts.signal, 1e-9);
  return {
    fiberLossDbPerKm: loss,
    detectorEfficiency: Math.min(0.9, eta * 10 ** ((loss * nearest.distanceKm) / 10)),
    darkCountYield: Math.max(lowest * 0.5, 1e-9),
    misalignment: Math.min(0.25, Math.max(signal.errors / Math.max(signal.detections, 1), 1e-4)),
  };
}

const UPPER_LIMITS: Record<FittedParameter, number> = { fiberLossDbPerKm: 100, detectorEfficiency: 1, darkCountYield: 1, misalignment: 0.5 };

/** Weighted least-squares fit; refuses (ValidationError on `field`) a parameter the data cannot identify. */
export function fitChannel(counts: MeasuredCounts, field = 'counts'): ChannelFit {
  const points = dataPoints(counts);
  const free = FITTED_PARAMETERS.filter((p) => counts.known[p] === undefined);
  const start = initialGuess(counts);
  const scales = free.map((p) => start[p]);
  const channelOf = (u: ArrayLike<number>): ChannelParameters => {
    const c = { distanceKm: 0, ...start, ...counts.known } as ChannelParameters;
    free.forEach((p, i) => (c[p] = u[i] * scales[i]));
    return c;
  };
  if (points.length <= free.length) {
    throw new ValidationError(field, `${points.length} data points cannot determine ${free.length} parameters`);
  }
  const at = (u: ArrayLike<number>, i: number) => modelWithGradient({ ...channelOf(u), distanceKm: points[i].distanceKm }, points[i]);
  const freeIndex = free.map((p) => FITTED_PARAMETERS.indexOf(p));
  // Identifiability is judged at the start too: a rank-deficient model would otherwise wander along its null space.
  const startJacobian = jacobian(free.map(() => 1), points, at, freeIndex, scales);
  refuseUnidentifiable(startJacobian, free, field);
  // Residuals are whitened here ((observed − model)/σ) and passed with unit weights: ml-levenberg-marquardt 5.1
  // applies its `weights` as 1/w² in the step but as w² in the error it accepts steps by. One common factor c
  // (same minimiser) brings JᵀJ to order one, since the library caps its damping at 1e7.
  const c = Math.sqrt(startJacobian.transpose().mmul(startJacobian).trace() / free.length);
  const fitted = levenbergMarquardt(
    { x: points.map((_, i) => i), y: points.map((p) => p.observed / (p.sigma * c)) },
    (u) => (i) => at(u, i).value / (points[i].sigma * c),
    {
      initialValues: free.map(() => 1),
      jacobianFunction: (u) => (i) => freeIndex.map((k, j) => (at(u, i).gradient[k] * scales[j]) / (points[i].sigma * c)),
      minValues: free.map(() => 0),
      maxValues: free.map((p, j) => UPPER_LIMITS[p] / scales[j]),
      damping: 1e-2,
      maxIterations: 500,
      errorTolerance: 0,
      improvementThreshold: 1e-3,
    },
  );
  const u = fitted.parameterValues;
  const j = jacobian(u, points, at, freeIndex, scales);
  refuseUnidentifiable(j, free, field);
  const covarianceU = inverse(j.transpose().mmul(j));
  const covariance = free.map((_, a) => free.map((__, b) => covarianceU.get(a, b) * scales[a] * scales[b]));
  const channel = channelOf(u);
  const parameters = {} as Record<FittedParameter, FittedValue>;
  for (const p of FITTED_PARAMETERS) {
    const k = free.indexOf(p);
    const value = channel[p];
    const standardError = k < 0 ? 0 : Math.sqrt(covariance[k][k]);
    parameters[p] = {
      value,
      standardError,
      interval95: [value - NORMAL_QUANTILE_95 * standardError, value + NORMAL_QUANTILE_95 * standardError],
      fixed: k < 0,
    };
  }
  const residuals = points.map((p, i) => {
    const expected = at(u, i).value;
    return { session: p.session, intensity: p.intensity, basis: p.basis, quantity: p.quantity, observed: p.observed, expected, normalized: (p.observed - expected) / p.sigma };
  });
  const chiSquare = residuals.reduce((s, r) => s + r.normalized ** 2, 0);
  const degreesOfFreedom = points.length - free.length;
  return {
    parameters,
    free,
    covariance,
    residuals,
    chiSquare,
    degreesOfFreedom,
    reducedChiSquare: chiSquare / degreesOfFreedom,
    iterations: fitted.iterations,
  };
}

/** J_ij = ∂(model_i/σ_i)/∂u_j in the scaled parameters u. */
function jacobian(
  u: ArrayLike<number>,
  points: DataPoint[],
  at: (u: ArrayLike<number>, i: number) => { gradient: number[] },
  freeIndex: number[],
  scales: number[],
): Matrix {
  const j = new Matrix(points.length, freeIndex.length);
  points.forEach((p, i) => {
    const g = at(u, i).gradient;
    freeIndex.forEach((k, c) => j.set(i, c, (g[k] * scales[c]) / p.sigma));
  });
  return j;
}

/** Refuses when a column vanishes or the column-normalised Jacobian is numerically rank deficient. */
function refuseUnidentifiable(j: Matrix, free: FittedParameter[], field: string): void {
  const norms = free.map((_, c) => j.getColumnVector(c).norm());
  const silent = free.filter((_, c) => !(norms[c] > 0));
  if (silent.length > 0) {
    throw new ValidationError(field, `the data cannot identify ${silent.join(', ')}: the counts do not depend on it; give it under "known"`);
  }
  const normalised = j.clone();
  free.forEach((_, c) => {
    for (let r = 0; r < j.rows; r++) normalised.set(r, c, j.get(r, c) / norms[c]);
  });
  const svd = new SingularValueDecomposition(normalised);
  const sigma = svd.diagonal;
  const smallest = sigma.indexOf(Math.min(...sigma));
  if (sigma[smallest] < IDENTIFIABILITY_THRESHOLD * Math.max(...sigma)) {
    const direction = svd.rightSingularVectors.getColumn(smallest);
    const involved = free.filter((_, c) => Math.abs(direction[c]) > 0.3);
    throw new ValidationError(
      field,
      `the data cannot identify ${involved.join(' and ')} separately (their effects on the counts are proportional); ` +
        'measure at a second distance or give one of them under "known"',
    );
  }
}
