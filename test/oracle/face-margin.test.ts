// Solving on an exposed face (docs/faces.md): the leak bound ε, the continuity margin (Fannes–Audenaert and
// Alicki–Fannes–Winter, against entropies from mathjs eigenvalues), and certificates whose faceExposures verify
// re-checks.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { ComplexMatrix, scale, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { faceContinuityMargin, feasibleFace, restrictToFace, type FeasibleFace } from '../../src/problem/feasible-face.js';
import { certificateBreakdown } from '../../src/certificate/bound.js';
import type { Problem } from '../../src/problem/model.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { referenceEigenvalues } from './reference.js';

/** Von Neumann entropy in bits from mathjs eigenvalues (reference.ts). */
function entropyBits(rho: ComplexMatrix): number {
  return referenceEigenvalues(rho).reduce((s, x) => (x > 1e-300 ? s - x * Math.log2(x) : s), 0);
}

/** Keeps the diagonal blocks of the key projectors {0..k−1}, {k..n−1} (the pinching Z). */
function pinch(rho: ComplexMatrix, k: number): ComplexMatrix {
  const n = rho.rows;
  const out = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (i < k === j < k) {
        out.re[i * n + j] = rho.re[i * n + j];
        out.im[i * n + j] = rho.im[i * n + j];
      }
    }
  }
  return out;
}

function diagonal(values: number[]): ComplexMatrix {
  const m = new ComplexMatrix(values.length, values.length);
  values.forEach((v, i) => (m.re[i * values.length + i] = v));
  return m;
}

/** A face with a given leak on C^4 (isometry onto the first three basis vectors) and one 4-dimensional branch. */
function syntheticFace(leak: number): { face: FeasibleFace; problem: Problem } {
  const isometry = new ComplexMatrix(4, 3);
  for (let i = 0; i < 3; i++) isometry.re[i * 3 + i] = 1;
  const face: FeasibleFace = { isometry, dimension: 3, reasons: [], exposures: [{ multipliers: [1] }], leak, gramDefect: 0, constraintOperators: [ComplexMatrix.identity(4)] };
  const problem = {
    dimensionA: 2,
    dimensionB: 2,
    constraints: [],
    branches: [{ label: 'b', krausOperators: [ComplexMatrix.identity(4)], keyProjectors: [diagonal([1, 1, 0, 0]), diagonal([0, 0, 1, 1])], score: 0 }],
  } as unknown as Problem;
  return { face, problem };
}

describe('continuity margin on an exposed face', () => {
  it('bounds the change of H(Z(ρ)) − H(ρ) when a pure state tilts off the face by weight ε (mathjs entropies)', () => {
    const leak = 1e-6;
    const { face, problem } = syntheticFace(leak);
    // With zero multipliers only the continuity part remains: the smaller of Fannes–Audenaert for H(ω) and H(Z(ω)),
    // 2·(t·log2(D − 1) + h(t)) with D = 4 + 1, and Alicki–Fannes–Winter for the conditional entropy of a copy of
    // the two key values, 2t·log2 2 + (1 + t)·h(t/(1 + t)) (Winter, Commun. Math. Phys. 347, 291 (2016); from memory).
    const margin = faceContinuityMargin(face, problem, 'von-neumann', [0], [0], 0);
    const t = Math.sqrt(leak) + leak / 2;
    const h = (p: number) => -p * Math.log2(p) - (1 - p) * Math.log2(1 - p);
    const fannes = 2 * (t * Math.log2(4) + h(t));
    const conditional = 2 * t + (1 + t) * h(t / (1 + t));
    expect(conditional).toBeLessThan(fannes);
    expect(margin).toBeCloseTo(conditional, 15);
    // ψ = √(1 − ε)·(|0⟩ + |3⟩... on the face: |0⟩+|2⟩)/√2 + √ε·|3⟩ (|3⟩ off the face); compare with its compression.
    const psi = [Math.sqrt((1 - leak) / 2), 0, Math.sqrt((1 - leak) / 2), Math.sqrt(leak)];
    const tilted = new ComplexMatrix(4, 4);
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) tilted.re[i * 4 + j] = psi[i] * psi[j];
    const compressed = new ComplexMatrix(4, 4);
    for (const [i, j] of [[0, 0], [0, 2], [2, 0], [2, 2]]) compressed.re[i * 4 + j] = 0.5;
    // D(ρ‖Z(ρ)) = H(Z(ρ)) − H(ρ) (the key-rate identity of Coles et al. 2016, one branch, no scores).
    const objective = (rho: ComplexMatrix) => entropyBits(pinch(rho, 2)) - entropyBits(rho);
    const change = Math.abs(objective(tilted) - objective(compressed));
    expect(change).toBeGreaterThan(0);
    expect(change).toBeLessThanOrEqual(margin);
  });

  it('the Alicki–Fannes–Winter form it uses holds for random nearby states (mathjs entropies and trace distances)', () => {
    // |ΔF| ≤ 2T·log2 d_K + (1 + T)·h(T/(1 + T)) for F = H(Z(ρ)) − H(ρ) = −H(K|S) of a key copy, T = ½‖ρ − σ‖₁:
    // the inequality is recalled (Winter 2016, from memory), so it is checked here on random pairs at several T.
    const rng = seededRandom(17);
    const h = (p: number) => (p <= 0 || p >= 1 ? 0 : -p * Math.log2(p) - (1 - p) * Math.log2(1 - p));
    const objective = (rho: ComplexMatrix) => entropyBits(pinch(rho, 2)) - entropyBits(rho);
    for (let trial = 0; trial < 40; trial++) {
      const rho = randomDensity(4, rng, trial % 2 === 0 ? 4 : 2);
      const sigma = randomDensity(4, rng, 4);
      const weight = 10 ** -(1 + (trial % 5));
      const mixed = scale(rho, 1 - weight);
      for (let i = 0; i < 16; i++) (mixed.re[i] += weight * sigma.re[i]), (mixed.im[i] += weight * sigma.im[i]);
      const difference = scale(mixed, 1);
      for (let i = 0; i < 16; i++) (difference.re[i] -= rho.re[i]), (difference.im[i] -= rho.im[i]);
      const distance = 0.5 * referenceEigenvalues(difference).reduce((sum, x) => sum + Math.abs(x), 0);
      const bound = 2 * distance + (1 + distance) * h(distance / (1 + distance));
      expect(Math.abs(objective(mixed) - objective(rho))).toBeLessThanOrEqual(bound + 1e-12);
    }
  });

  it('charges the constraint shift min(Σ(y⁺ + y⁻)‖Γ‖_F·2t, ‖Y‖_∞·2t, 2√ε‖ΠYQ‖_∞ + 2ε‖Y‖_∞), is 0 without exposures and Infinity where nothing is derived', () => {
    const leak = 1e-10;
    const { face, problem } = syntheticFace(leak);
    const t = 1e-5 + 0.5e-10;
    const base = faceContinuityMargin(face, problem, 'von-neumann', [0], [0], 0);
    const shift = (operators: ComplexMatrix[], lower: number[], upper: number[]) =>
      faceContinuityMargin({ ...face, constraintOperators: operators }, problem, 'von-neumann', lower, upper, 0) - base;
    // The face is span{|0⟩, |1⟩, |2⟩} of C^4. Y = 3·1 has no block between the face and |3⟩: only 2ε·‖Y‖_∞ = 6ε.
    const identity = ComplexMatrix.identity(4);
    expect(shift([identity], [3], [0])).toBeCloseTo(6 * leak, 15);
    expect(faceContinuityMargin({ ...face, exposures: [], leak: 0 }, problem, 'von-neumann', [3], [0], 0)).toBe(0);
    expect(faceContinuityMargin(face, problem, 'petz-up', [0], [0], 0)).toBe(Infinity);
    expect(faceContinuityMargin({ ...face, leak: Infinity }, problem, 'von-neumann', [0], [0], 0)).toBe(Infinity);
    // Multipliers whose combination cancels (the same operator with y⁺ = y⁻ = 3): only the rounding allowances.
    const cancelling = shift([identity, identity], [3, 0], [0, 3]);
    expect(cancelling).toBeGreaterThanOrEqual(0);
    expect(cancelling).toBeLessThan(1e-18);
    // A block across the face, Y = 3·(|0⟩⟨3| + |3⟩⟨0|): ‖ΠYQ‖_∞ = ‖Y‖_∞ = 3, so the whole-operator charge 3·2t is
    // the smaller one.
    const across = new ComplexMatrix(4, 4);
    across.re[0 * 4 + 3] = 1;
    across.re[3 * 4 + 0] = 1;
    expect(shift([across], [3], [0])).toBeCloseTo(3 * 2 * t, 12);
    expect(shift([across], [3], [0])).toBeGreaterThanOrEqual(3 * 2 * t);
    // Both: Y = |0⟩⟨3| + |3⟩⟨0| + 10·|3⟩⟨3|, ‖ΠYQ‖_∞ = 1, ‖Y‖_∞ = 5 + √26 (eigenvalues of [[0, 1], [1, 10]]):
    // by blocks 2√ε·1 + 2ε·(5 + √26), far below (5 + √26)·2t.
    const mixed = across.clone();
    mixed.re[3 * 4 + 3] = 10;
    const byBlocks = 2 * Math.sqrt(leak) + 2 * leak * (5 + Math.sqrt(26));
    expect(shift([mixed], [1], [0])).toBeCloseTo(byBlocks, 12);
    expect(shift([mixed], [1], [0])).toBeGreaterThanOrEqual(byBlocks);
    // An isometry orthonormal only to g: the bound is scaled by Tr X ∈ [1/(1 + g), 1/(1 − g)] (homogeneity of F).
    const g = 1e-3;
    expect(faceContinuityMargin({ ...face, gramDefect: g }, problem, 'von-neumann', [0], [0], -2) - base).toBeCloseTo((g / (1 - g)) * 2, 12);
    expect(faceContinuityMargin({ ...face, gramDefect: undefined }, problem, 'von-neumann', [0], [0], 0)).toBe(Infinity);
  });

  it('the block split holds: |Tr Y(ρ − σ)| ≤ 2√ε·‖ΠYQ‖_∞ + 2ε·‖Y‖_∞ for states tilted off the face (mathjs norms)', () => {
    // ρ = |ψ⟩⟨ψ| with ψ = √(1 − ε)·a + √ε·e₃ (a a unit vector on the face span{e₀, e₁, e₂}), σ = |a⟩⟨a| its
    // normalised projection; Y random Hermitian. Operator norms from mathjs eigenvalues, not the project's code.
    const rng = seededRandom(23);
    for (let trial = 0; trial < 30; trial++) {
      const leak = 10 ** -(2 + (trial % 8));
      const y = randomHermitian(4, rng);
      const a = [rng() - 0.5, rng() - 0.5, rng() - 0.5];
      const norm = Math.hypot(...a);
      const psi = [...a.map((v) => (Math.sqrt(1 - leak) * v) / norm), Math.sqrt(leak)];
      const rho = new ComplexMatrix(4, 4);
      const sigma = new ComplexMatrix(4, 4);
      for (let i = 0; i < 4; i++) {
        for (let j = 0; j < 4; j++) {
          rho.re[i * 4 + j] = psi[i] * psi[j];
          if (i < 3 && j < 3) sigma.re[i * 4 + j] = (a[i] * a[j]) / norm ** 2;
        }
      }
      const difference = rho.clone();
      for (let i = 0; i < 16; i++) difference.re[i] -= sigma.re[i];
      const pairing = Math.abs(traceProductReal(y, difference));
      // ΠYQ is the column e₃ of Y restricted to rows 0..2: its operator norm is that column's length.
      const crossColumn = Math.hypot(...[0, 1, 2].flatMap((i) => [y.re[i * 4 + 3], y.im[i * 4 + 3]]));
      const values = referenceEigenvalues(y);
      const yNorm = Math.max(Math.abs(values[0]), Math.abs(values[values.length - 1]));
      expect(pairing).toBeLessThanOrEqual(2 * Math.sqrt(leak) * crossColumn + 2 * leak * yNorm + 1e-15);
    }
  });
});

describe('solving a model with no full-rank feasible state (von Neumann)', () => {
  // d = 8, seed 23: ±1e-3 tables from a rank-4 state plus equalities pinning ρ to its support.
  const model = randomModel(8, 23);
  const request = { kind: 'von-neumann' as const };
  // At gap 1e-3: a face is used only where its continuity margin leaves room for the requested gap.
  const result = solve(model.problem, request, { gapTolerance: 1e-3, timeLimitMs: 20000 });

  it('ends with a bound from the exposed face, recorded in the certificate, which verify accepts', () => {
    expect(result.status).not.toBe('NUMERICAL_ERROR');
    expect(result.certificate?.faceExposures?.length).toBe(1);
    const report = verifyResult(model.problem, request, result);
    expect(report.valid, report.reason).toBe(true);
    // The bound holds at the generating state (feasible by construction) and the face is its support's dimension.
    const atTruth = createObjective(model.problem, request).evaluate(model.truth).value;
    expect(result.certifiedLowerBound as number).toBeLessThanOrEqual(atTruth + 1e-9);
    const face = feasibleFace(model.problem, { exposures: result.certificate!.faceExposures });
    expect(face.dimension).toBe(model.traits.truthRank);
    expect(face.leak).toBeGreaterThan(0);
    expect(face.leak).toBeLessThan(1e-9);
    // The truth meets every constraint it generated: Tr(Γ·truth) within each interval (a direct check).
    for (const c of model.problem.constraints) {
      const value = traceProductReal(c.operator, model.truth);
      expect(value).toBeGreaterThanOrEqual(c.lower - 1e-9);
      expect(value).toBeLessThanOrEqual(c.upper + 1e-9);
    }
  });

  it('verify rejects a tampered exposure and a certificate that drops it', () => {
    const certificate = result.certificate!;
    const flipped = { ...certificate, faceExposures: certificate.faceExposures!.map((e) => ({ multipliers: e.multipliers.map((y) => -y) })) };
    const tampered = verifyResult(model.problem, request, { ...result, certificate: flipped });
    expect(tampered.valid).toBe(false);
    expect(tampered.reason).toMatch(/faceExposures/);
    const { faceExposures: _dropped, ...without } = certificate;
    const dropped = verifyResult(model.problem, request, { ...result, certificate: without });
    expect(dropped.valid).toBe(false);
  });
});

describe('d16#2 of the random suite, von Neumann: the face is used where its continuity margin allows the request', () => {
  const model = randomModel(16, 2);
  const request = { kind: 'von-neumann' as const };
  const atTruth = createObjective(model.problem, request).evaluate(model.truth).value;

  it('at gap 1e-3 the exposed face certifies; the bound verifies and holds at the generating state', () => {
    const result = solve(model.problem, request, { gapTolerance: 1e-3, timeLimitMs: 5000 });
    expect(result.status).toBe('CERTIFIED');
    expect(result.certificate?.faceExposures?.length).toBe(1);
    const report = verifyResult(model.problem, request, result);
    expect(report.valid, report.reason).toBe(true);
    expect(result.certifiedLowerBound as number).toBeLessThanOrEqual(atTruth + 1e-9);
    // The face recomputed from the certificate is the support of the generating state (rank 3 by construction).
    expect(feasibleFace(model.problem, { exposures: result.certificate!.faceExposures }).dimension).toBe(model.traits.truthRank);
  });

  it('at gap 1e-6 the exposed face certifies: leak read in double-double, continuity in the conditional-entropy form', () => {
    const result = solve(model.problem, request, { gapTolerance: 1e-6, timeLimitMs: 30000 });
    expect(result.status).toBe('CERTIFIED');
    expect(result.certificate?.faceExposures?.length).toBe(1);
    const report = verifyResult(model.problem, request, result);
    expect(report.valid, report.reason).toBe(true);
    expect(result.certifiedLowerBound as number).toBeLessThanOrEqual(atTruth + 1e-9);
    // The claimed bound is the lifted one (test/certificate/lifted-face.test.ts). The continuity route alone, at the
    // same point compressed onto the face, certifies too: the eigensolver-scale leak (1.7e-12) gave a margin of
    // 1.7e-4; the double-double leak (2.7e-16) 1.5e-6 with Fannes–Audenaert on H(ω) and H(Z(ω)); Alicki–Fannes–Winter
    // on their difference, ‖Y‖_∞ and the shift by blocks give about 6e-7.
    expect(result.certificate?.linearizationOffFace).toBe(true);
    const { linearizationOffFace: _lifted, ...onFace } = result.certificate!;
    const face = feasibleFace(model.problem, { exposures: onFace.faceExposures });
    const restricted = restrictToFace(model.problem, face);
    const continuity = certificateBreakdown(face, restricted, createObjective(restricted, request), onFace);
    expect(continuity.margin).toBeLessThan(1e-6);
    expect((result.upperBound as number) - continuity.lowerBound).toBeLessThanOrEqual(1e-6);
  });
});
