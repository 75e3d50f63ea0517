// The single-photon problem is a relaxation of the physics (docs/decoy.md, "Single-photon problem"): the true
// single-photon state of the simulated channel, built here independently, satisfies every constraint.
import { beforeAll, describe, expect, it } from 'vitest';
import type { Highs } from 'highs';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { basisBounds, lpSolver } from '../../src/decoy/bounds.js';
import { expectedGain, photonYield } from '../../src/decoy/channel.js';
import { singlePhotonProblem, yieldScale } from '../../src/decoy/single-photon.js';
import { maxConstraintViolation } from '../../src/problem/violation.js';
import { problemFromJson } from '../../src/problem/validate.js';

/** Gobby, Yuan, Shields, APL 84, 3762 (2004). */
const GYS = { fiberLossDbPerKm: 0.21, detectorEfficiency: 0.045, darkCountYield: 1.7e-6, misalignment: 0.033 };
const H = Math.SQRT1_2;
const SENT = [
  [1, 0],
  [0, 1],
  [H, H],
  [H, -H],
];

/**
 * ρ = Σ_ij √(p_i p_j)|i⟩⟨j| ⊗ N(|φ_i⟩⟨φ_j|) with N(X) = Y·((1−2e)X + e·Tr X·1) ⊕ (1−Y)·Tr X·|vac⟩⟨vac|: a photon
 * detected with probability Y and flipped by a depolarising map of error rate e (common practice).
 */
function trueState(pz: number, y: number, e: number): ComplexMatrix {
  const p = [pz / 2, pz / 2, (1 - pz) / 2, (1 - pz) / 2];
  const rho = new ComplexMatrix(12, 12);
  for (let i = 0; i < 4; i++) {
    for (let j = 0; j < 4; j++) {
      const w = Math.sqrt(p[i] * p[j]);
      const overlap = SENT[i][0] * SENT[j][0] + SENT[i][1] * SENT[j][1];
      for (let a = 0; a < 3; a++) {
        for (let b = 0; b < 3; b++) {
          let v = 0;
          if (a < 2 && b < 2) v = y * ((1 - 2 * e) * SENT[i][a] * SENT[j][b] + (a === b ? e * overlap : 0));
          if (a === 2 && b === 2) v = (1 - y) * overlap;
          rho.re[(i * 3 + a) * 12 + (j * 3 + b)] = w * v;
        }
      }
    }
  }
  return rho;
}

let highs: Highs;
beforeAll(async () => {
  highs = await lpSolver();
});

describe('single-photon problem', () => {
  it('refuses a yield scale that is not a power of two, or too small for the scaled problem to be exact', () => {
    const rows = [0.48, 0.1, 0].map((intensity) => ({ intensity, ...expectedGain({ distanceKm: 50, ...GYS }, intensity) }));
    const bounds = { Z: basisBounds(highs, 'Z', rows), X: basisBounds(highs, 'X', rows) };
    expect(() => singlePhotonProblem(bounds, 0.5, 0.3)).toThrow(/power of two/);
    expect(() => singlePhotonProblem(bounds, 0.5, yieldScale(bounds) / 2)).toThrow(/not be exact/);
  });

  for (const [distanceKm, pz] of [
    [0, 0.5],
    [60, 0.7],
    [130, 0.9],
  ]) {
    it(`${distanceKm} km, p_Z = ${pz}: the channel's true single-photon state is feasible`, () => {
      const channel = { distanceKm, ...GYS };
      const rows = [0.48, 0.1, 0].map((intensity) => ({ intensity, ...expectedGain(channel, intensity) }));
      const bounds = { Z: basisBounds(highs, 'Z', rows), X: basisBounds(highs, 'X', rows) };
      const truth = photonYield(channel, 1);
      const problem = problemFromJson(singlePhotonProblem(bounds, pz));
      const rho = trueState(pz, truth.yield, truth.errorYield / truth.yield);
      expect(maxConstraintViolation(problem, rho)).toBeLessThan(1e-12);
      // The scaled problem (yields divided by s) holds the same channel with its click probability divided by s.
      const s = yieldScale(bounds);
      expect(s).toBeGreaterThanOrEqual(2 * Math.max(bounds.Z.yieldUpper, bounds.X.yieldUpper));
      expect(s).toBeLessThan(4 * Math.max(bounds.Z.yieldUpper, bounds.X.yieldUpper));
      const scaled = problemFromJson(singlePhotonProblem(bounds, pz, s));
      expect(maxConstraintViolation(scaled, trueState(pz, truth.yield / s, truth.errorYield / truth.yield))).toBeLessThan(1e-12);
    });
  }
});
