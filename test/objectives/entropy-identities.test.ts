// Identities every entropy kind must satisfy; each check names its outside source.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ComplexMatrix, addScaledInPlace, scale } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import type { EntropyKind, Problem } from '../../src/problem/model.js';
import { randomDensity, seededRandom } from '../helpers/random.js';
import { aliceKeyProblem, bellDiagonal, binaryEntropy, randomInstrumentProblem } from './fixtures.js';

const RENYI_KINDS: EntropyKind[] = ['petz-up', 'petz-down', 'sandwiched-up'];
const ALL_KINDS: EntropyKind[] = ['von-neumann', ...RENYI_KINDS];
const value = (problem: Problem, kind: EntropyKind, alpha: number, rho: ComplexMatrix) =>
  createObjective(problem, { kind, alpha }).evaluate(rho).value;

/**
 * A classical-quantum instance: |ψ_y⟩ = Σ_z √p(z|y)|z⟩_A|z⟩_B ⊗ |y⟩_F with weights p(y); the eigenvectors of ρ are
 * the |ψ_y⟩|y⟩, so the purifying system holds exactly y and ρ_ZE is the classical joint distribution p(z, y).
 */
function classicalInstance(joint: number[][]): { problem: Problem; rho: ComplexMatrix } {
  const nz = joint[0].length;
  const ny = joint.length;
  const dB = nz * ny;
  const d = nz * dB;
  const rho = ComplexMatrix.zeros(d);
  joint.forEach((row, y) => {
    const vector = new Float64Array(d);
    row.forEach((p, z) => {
      vector[z * dB + z * ny + y] = Math.sqrt(p);
    });
    for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) rho.re[i * d + j] += vector[i] * vector[j];
  });
  return { problem: aliceKeyProblem(nz, dB), rho };
}

describe('entropy kinds on reference states', () => {
  const problem = aliceKeyProblem(2, 2);

  it('give exactly 1 bit on |Φ+⟩ (purity decouples the eavesdropper; common practice)', () => {
    const phiPlus = bellDiagonal([1, 0, 0, 0]);
    for (const kind of ALL_KINDS) {
      const r = createObjective(problem, { kind, alpha: 1.5 }).evaluate(phiPlus);
      expect(r.value).toBeCloseTo(1, 12);
      expect(r.gradient).toBeNull(); // rank one: no gradient exists
    }
  });

  it('give 0 on the maximally mixed state (the purification copies everything; common practice)', () => {
    const mixed = scale(ComplexMatrix.identity(4), 0.25);
    for (const kind of ALL_KINDS) expect(Math.abs(value(problem, kind, 1.7, mixed))).toBeLessThan(1e-12);
  });

  it('von Neumann on the BB84 optimum (Bell weights (1−Q)², Q(1−Q), Q(1−Q), Q²) is 1 − h(Q) (Shor & Preskill 2000)', () => {
    for (const q of [0.01, 0.05, 0.11, 0.2]) {
      const rho = bellDiagonal([(1 - q) ** 2, q * (1 - q), q * (1 - q), q * q]);
      expect(value(problem, 'von-neumann', 1, rho)).toBeCloseTo(1 - binaryEntropy(q), 12);
    }
  });
});

describe('classical reduction (Arimoto 1977; Tomamichel 2016, ch. 5)', () => {
  const joint = [
    [0.3, 0.1, 0.05],
    [0.05, 0.25, 0.25],
  ];
  const { problem, rho } = classicalInstance(joint);
  const py = joint.map((row) => row.reduce((s, p) => s + p, 0));
  for (const alpha of [1.2, 1.5, 2]) {
    it(`every kind equals the classical conditional Rényi entropy at α = ${alpha}`, () => {
      // ↑ kinds: Arimoto's form (α/(1−α)) log Σ_y (Σ_z p(z,y)^α)^{1/α}.
      const arimoto =
        (alpha / (1 - alpha)) * Math.log2(joint.reduce((s, row) => s + row.reduce((t, p) => t + p ** alpha, 0) ** (1 / alpha), 0));
      // ↓ kind: (1/(1−α)) log Σ_{z,y} p(z,y)^α p(y)^{1−α}.
      const down =
        (1 / (1 - alpha)) *
        Math.log2(joint.reduce((s, row, y) => s + row.reduce((t, p) => t + p ** alpha * py[y] ** (1 - alpha), 0), 0));
      expect(value(problem, 'petz-up', alpha, rho)).toBeCloseTo(arimoto, 10);
      expect(value(problem, 'sandwiched-up', alpha, rho)).toBeCloseTo(arimoto, 9);
      expect(value(problem, 'petz-down', alpha, rho)).toBeCloseTo(down, 10);
    });
  }
  it('von Neumann equals H(Z|Y) of the joint distribution (common practice)', () => {
    const hzy = -joint.reduce((s, row, y) => s + row.reduce((t, p) => t + p * Math.log2(p / py[y]), 0), 0);
    expect(value(problem, 'von-neumann', 1, rho)).toBeCloseTo(hzy, 12);
  });
});

describe('order relations (Tomamichel 2016, ch. 5; Müller-Lennert et al. 2013)', () => {
  const seeds = fc.integer({ min: 1, max: 1_000_000 });
  it('H̄↓_α ≤ H̄↑_α ≤ H̃↑_α ≤ H on random states, and each Rényi kind is non-increasing in α', () => {
    fc.assert(
      fc.property(seeds, fc.double({ min: 1.05, max: 1.95, noNaN: true }), (seed, alpha) => {
        const rng = seededRandom(seed);
        const problem = randomInstrumentProblem(2, 2, [3, 2], [2, 1], [0, 0], rng);
        const rho = randomDensity(4, rng);
        const vn = value(problem, 'von-neumann', 1, rho);
        const down = value(problem, 'petz-down', alpha, rho);
        const up = value(problem, 'petz-up', alpha, rho);
        const sandwiched = value(problem, 'sandwiched-up', alpha, rho);
        const slack = 1e-9;
        expect(down).toBeLessThanOrEqual(up + slack);
        expect(up).toBeLessThanOrEqual(sandwiched + slack);
        expect(sandwiched).toBeLessThanOrEqual(vn + slack);
        for (const kind of RENYI_KINDS) {
          expect(value(problem, kind, alpha + 0.05, rho)).toBeLessThanOrEqual(value(problem, kind, alpha, rho) + slack);
        }
      }),
      { numRuns: 25 },
    );
  });

  it('α → 1 recovers von Neumann for every Rényi kind', () => {
    const rng = seededRandom(7);
    const problem = randomInstrumentProblem(2, 3, [4, 3], [2, 3], [0, 0], rng);
    const rho = randomDensity(6, rng);
    const vn = value(problem, 'von-neumann', 1, rho);
    for (const kind of RENYI_KINDS) {
      const near = value(problem, kind, 1 + 1e-6, rho);
      expect(Math.abs(near - vn)).toBeLessThan(1e-5);
    }
  });
});

describe('branch scores and convexity', () => {
  it('a constant score k shifts every kind by exactly −k (docs/math.md §1 weights; entropy accumulation, common practice)', () => {
    const rng = seededRandom(11);
    const k = 0.37;
    const plain = randomInstrumentProblem(2, 2, [3, 3], [2, 1], [0, 0], rng);
    const scored: Problem = { ...plain, branches: plain.branches.map((b) => ({ ...b, score: k })) };
    const rho = randomDensity(4, rng);
    for (const kind of ALL_KINDS) {
      expect(value(scored, kind, 1.4, rho)).toBeCloseTo(value(plain, kind, 1.4, rho) - k, 11);
    }
  });

  it('F((1−t)ρ₀ + tρ₁) ≤ (1−t)F(ρ₀) + tF(ρ₁) on random pairs (Lieb 1973; Frank & Lieb 2013)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1_000_000 }), fc.double({ min: 0.05, max: 0.95, noNaN: true }), (seed, t) => {
        const rng = seededRandom(seed);
        const problem = randomInstrumentProblem(2, 2, [3, 2], [3, 2], [0.2, -0.1], rng);
        const rho0 = randomDensity(4, rng);
        const rho1 = randomDensity(4, rng);
        const mix = scale(rho0, 1 - t);
        addScaledInPlace(mix, rho1, t);
        for (const kind of ALL_KINDS) {
          const lhs = value(problem, kind, 1.6, mix);
          const rhs = (1 - t) * value(problem, kind, 1.6, rho0) + t * value(problem, kind, 1.6, rho1);
          expect(lhs).toBeLessThanOrEqual(rhs + 1e-10);
        }
      }),
      { numRuns: 20 },
    );
  });

  it('a rank-deficient branch output (pure key register) is evaluated on its exact support', () => {
    // |ψ⟩ = √0.7|00⟩ + √0.3|11⟩ is pure: all kinds give the Rényi entropy of (0.7, 0.3) of their order (common practice).
    const rho = ComplexMatrix.zeros(4);
    const v = [Math.sqrt(0.7), 0, 0, Math.sqrt(0.3)];
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) rho.re[i * 4 + j] = v[i] * v[j];
    const problem = aliceKeyProblem(2, 2);
    for (const kind of RENYI_KINDS) {
      const alpha = 1.5;
      const renyi = (1 / (1 - alpha)) * Math.log2(0.7 ** alpha + 0.3 ** alpha);
      expect(value(problem, kind, alpha, rho)).toBeCloseTo(renyi, 10);
    }
    expect(value(problem, 'von-neumann', 1, rho)).toBeCloseTo(binaryEntropy(0.3), 12);
  });
});
