// Channel fit (docs/decoy.md, "Fitting the channel"): exact recovery from noise-free counts, interval coverage on
// seeded binomial data (common practice: 95 % Wald intervals from the Fisher information), refusal when a
// parameter is not identified, and the measured-counts reader's field-path errors.
import { describe, expect, it } from 'vitest';
import { readMeasuredCounts } from '../../src/decoy/counts.js';
import { fitChannel } from '../../src/decoy/fit.js';
import { simulateCounts, type SimulationPlan } from '../../src/decoy/simulate.js';
import { FITTED_PARAMETERS } from '../../src/decoy/counts.js';
import { seededRandom } from '../helpers/random.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004). */
const TRUTH = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };
const PLAN: SimulationPlan = { signal: 0.5, decoys: [0.1, 0], zBasisProbability: 0.5, distancesKm: [10, 40, 80], pulses: 1e10 };

describe('fit of the channel model', () => {
  it('noise-free counts return every parameter to 1e-6 (relative)', () => {
    const fit = fitChannel(simulateCounts(TRUTH, PLAN));
    for (const p of FITTED_PARAMETERS) expect(Math.abs(fit.parameters[p].value / TRUTH[p] - 1)).toBeLessThan(1e-6);
    expect(fit.chiSquare).toBeLessThan(1e-6);
    expect(fit.degreesOfFreedom).toBe(3 * 6 * 2 - 4);
  });

  it('on 40 seeded noisy data sets the 95 % intervals cover the truth in 85–100 % of cases (200-trial study: npm run bench)', () => {
    const uniform = seededRandom(2026);
    let covered = 0;
    let total = 0;
    for (let trial = 0; trial < 40; trial++) {
      const fit = fitChannel(simulateCounts(TRUTH, PLAN, uniform));
      for (const p of FITTED_PARAMETERS) {
        const [low, high] = fit.parameters[p].interval95;
        total++;
        if (low <= TRUTH[p] && TRUTH[p] <= high) covered++;
      }
      expect(fit.reducedChiSquare).toBeLessThan(5);
    }
    expect(covered / total).toBeGreaterThan(0.85);
  }, 120_000);

  it('one distance cannot separate fibre loss from detector efficiency: refused, naming both', () => {
    expect(() => fitChannel(simulateCounts(TRUTH, { ...PLAN, distancesKm: [25] }))).toThrow(
      /cannot identify fiberLossDbPerKm and detectorEfficiency separately/,
    );
  });

  it('one distance with the fibre loss given as known: the rest is fitted, the known value is held fixed', () => {
    const counts = { ...simulateCounts(TRUTH, { ...PLAN, distancesKm: [25] }), known: { fiberLossDbPerKm: 0.21 } };
    const fit = fitChannel(counts);
    expect(fit.parameters.fiberLossDbPerKm).toMatchObject({ value: 0.21, standardError: 0, fixed: true });
    expect(Math.abs(fit.parameters.detectorEfficiency.value / TRUTH.detectorEfficiency - 1)).toBeLessThan(1e-6);
  });
});

describe('measured-counts file: every defect names its field path', () => {
  const good = () => ({
    signal: 0.5,
    decoys: [0.1, 0],
    sessions: [
      {
        distanceKm: 20,
        counts: [0.5, 0.1, 0].flatMap((intensity) =>
          ['Z', 'X'].map((basis) => ({ intensity, basis, pulses: 1000000, detections: 1000, errors: 20 })),
        ),
      },
    ],
  });
  it('a well-formed file is read', () => {
    const counts = readMeasuredCounts(good());
    expect(counts.zBasisProbability).toBe(0.5);
    expect(counts.sessions[0].records).toHaveLength(6);
  });
  const cases: [string, (j: ReturnType<typeof good>) => unknown, string][] = [
    ['errors above detections', (j) => ((j.sessions[0].counts[3].errors = 2000), j), 'counts.sessions[0].counts[3].errors: must not exceed detections (2000 > 1000)'],
    ['an unknown intensity', (j) => ((j.sessions[0].counts[0].intensity = 0.3), j), 'counts.sessions[0].counts[0].intensity: 0.3 is neither the signal nor a decoy (0.5, 0.1, 0)'],
    ['a bad basis', (j) => ((j.sessions[0].counts[1].basis = 'Y'), j), 'counts.sessions[0].counts[1].basis: must be "Z" or "X" (got "Y")'],
    ['a fractional count', (j) => ((j.sessions[0].counts[2].detections = 10.5), j), 'counts.sessions[0].counts[2].detections: must be a whole number of events, 0 to 2^53 (got 10.5)'],
    ['a missing record', (j) => (j.sessions[0].counts.pop(), j), 'counts.sessions[0].counts: needs exactly one record for intensity 0 in basis X (found 0)'],
    ['a misspelt field', (j) => ({ ...j, decoy: [0.1] }), 'counts.decoy: unknown field (expected one of description, signal, decoys, zBasisProbability, known, sessions)'],
    ['no decoys', (j) => ({ ...j, decoys: [] }), 'counts.decoys: must list at least one decoy intensity'],
  ];
  for (const [name, mutate, message] of cases) {
    it(name, () => {
      expect(() => readMeasuredCounts(mutate(good()))).toThrow(message);
    });
  }
});
