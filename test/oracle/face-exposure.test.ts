// Facial reduction by exposing directions: models whose equalities pin ρ to the support of a known low-rank state
// (constructed in src/bench/random-models.ts: Γ₁ − Γ₀ ⪰ 0 vanishes on it). The face found must be that support
// (mathjs eigenvalues), the re-check in feasibleFace must accept it without the optimiser and reject tampering,
// and the oracle on the face must find a full-rank point and bounds that hold at the known state.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { ComplexMatrix, conjugate, conjugateAdjoint, multiply, adjoint, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';

/** A − B entry by entry. */
function subtractMatrices(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  const out = a.clone();
  for (let t = 0; t < out.re.length; t++) {
    out.re[t] -= b.re[t];
    out.im[t] -= b.im[t];
  }
  return out;
}

/** ‖A‖_F entry by entry. */
function frobenius(a: ComplexMatrix): number {
  let s = 0;
  for (let t = 0; t < a.re.length; t++) s += a.re[t] * a.re[t] + a.im[t] * a.im[t];
  return Math.sqrt(s);
}
import { exposeFeasibleFace } from '../../src/oracle/index.js';
import { FaceExposureError, feasibleFace, restrictToFace } from '../../src/problem/feasible-face.js';
import { FEASIBILITY_TOLERANCE } from '../../src/problem/violation.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';
import { referenceDualBound, referenceEigenvalues } from './reference.js';

/** (1 − PP†)·ρ·(1 − PP†): the part of ρ off the face. */
function offFace(isometry: ComplexMatrix, rho: ComplexMatrix): ComplexMatrix {
  const n = rho.rows;
  const projector = multiply(isometry, adjoint(isometry));
  const complement = ComplexMatrix.identity(n);
  for (let t = 0; t < n * n; t++) {
    complement.re[t] -= projector.re[t];
    complement.im[t] -= projector.im[t];
  }
  return conjugate(complement, rho);
}

const CASES = [
  { d: 4, seed: 2, rank: 1 },
  { d: 8, seed: 1, rank: 4 },
  { d: 8, seed: 3, rank: 2 },
  { d: 16, seed: 2, rank: 5 },
  { d: 32, seed: 4, rank: 6 },
];

describe('exposeFeasibleFace on equalities that pin ρ to the support of a known state', () => {
  for (const { d, seed, rank } of CASES) {
    it(`d=${d} seed ${seed}: the face is the support of the rank-${rank} state, re-checked without the optimiser`, () => {
      const model = randomModel(d, seed, { face: true, truthRank: rank, intervals: seed % 2 === 0 });
      const exact = feasibleFace(model.problem);
      expect(exact.dimension).toBe(d); // the exact reductions (marginal, spectral edges) do not see this face
      const { face, feasible } = exposeFeasibleFace(model.problem);
      expect(face.dimension).toBe(rank);
      expect(face.exposures.length).toBeGreaterThan(0);
      const isometry = face.isometry as ComplexMatrix;
      // mathjs: the state has no weight off the face (to rounding), and the face is no larger than its support.
      expect(referenceEigenvalues(offFace(isometry, model.truth))[d - 1]).toBeLessThan(1e-10);
      expect(referenceEigenvalues(conjugateAdjoint(isometry, model.truth))[0]).toBeGreaterThan(1e-8);
      // The verifier's path: the same face from the problem and the stored multipliers, with eigendecompositions only.
      expect(feasibleFace(model.problem, { exposures: face.exposures }).dimension).toBe(rank);
      // On the face the analytic centre has full rank (mathjs eigenvalues).
      expect(feasible.status).toBe('OPTIMAL');
      const centre = referenceEigenvalues(feasible.point as ComplexMatrix);
      expect(centre[0]).toBeGreaterThan(1e-6 * centre[rank - 1]);
    });
  }

  for (const { d, seed, rank } of CASES) {
    it(`d=${d} seed ${seed}: the face tilts off the support by < 1e-8 (not ~√u), so its centre meets the original constraints`, () => {
      const model = randomModel(d, seed, { face: true, truthRank: rank, intervals: seed % 2 === 0 });
      const { face, feasible } = exposeFeasibleFace(model.problem);
      const isometry = face.isometry as ComplexMatrix;
      // Outside reference: the generating state, whose support is the face by construction (random-models.ts), and its
      // smallest nonzero eigenvalue from mathjs. ‖(1 − PP†)·ρ‖_F / λ_min⁺(ρ) is the sine of the tilt to first order.
      // Measured with the sparse exposures: ≤ 3e-14, except 1e-9 for the rank-one face of d = 4 (its face block says
      // nothing, so the refit sees the tilt only through Z·V); before them: 4.7e-8 (d = 4), 3.2e-6 (d = 8, seed 1).
      const smallest = referenceEigenvalues(model.truth)[d - rank];
      const offFaceColumns = subtractMatrices(model.truth, multiply(isometry, multiply(adjoint(isometry), model.truth)));
      expect(frobenius(offFaceColumns) / smallest).toBeLessThan(1e-8);
      // The centre on the face, lifted, meets every original equality within the result's feasibility tolerance.
      const lifted = conjugate(isometry, feasible.point as ComplexMatrix);
      for (const c of model.problem.constraints) {
        if (c.lower !== c.upper) continue;
        expect(Math.abs(traceProductReal(c.operator, lifted) - c.lower) / frobenius(c.operator)).toBeLessThanOrEqual(FEASIBILITY_TOLERANCE);
      }
    });
  }

  it('d16#2 of the random suite: the face found is the support of its generating state, and its centre is feasible', () => {
    const model = randomModel(16, 2);
    const { face, feasible } = exposeFeasibleFace(model.problem);
    expect(face.dimension).toBe(model.traits.truthRank);
    expect(feasible.status).toBe('OPTIMAL');
    const isometry = face.isometry as ComplexMatrix;
    // Before the sparse exposures: a tilt of 1.5e-6, and the problem restated on that face was infeasible.
    const smallest = referenceEigenvalues(model.truth)[16 - model.traits.truthRank];
    const offFaceColumns = subtractMatrices(model.truth, multiply(isometry, multiply(adjoint(isometry), model.truth)));
    expect(frobenius(offFaceColumns) / smallest).toBeLessThan(1e-12);
  });

  it("d32#19: where the search's equality form ends without an answer, its interval form finds the support", () => {
    // The sub-problem {τ ⪰ 0, Tr τ = 1, Tr(B_j τ) = 0} ended NUMERICAL_ERROR (the interior-point iterates diverged,
    // and before that the dual bound threw on them: the solve ended NUMERICAL_ERROR in set-up); at s = 1e-10 it is
    // certified infeasible. mathjs: the generating state has no weight off the face found (to rounding).
    const model = randomModel(32, 19);
    const { face, feasible } = exposeFeasibleFace(model.problem);
    expect(face.dimension).toBe(model.traits.truthRank);
    expect(feasible.status).toBe('OPTIMAL');
    const largest = referenceEigenvalues(offFace(face.isometry as ComplexMatrix, model.truth)).at(-1) as number;
    expect(largest).toBeLessThan(1e-12);
  });

  it('d4#10 of the random suite: full tables leave one pure state, and the face found is its span', () => {
    // Every equality direction vanishes on that state (V†A_iV = 0), so the refinement's Gram matrix there is pure
    // rounding: with a cut relative to its own largest eigenvalue alone it turned a 1e-17 residual into 1e-2 steps
    // and an exposure that feasibleFace rejected (eigenvalue −0.57), leaving the solver on the whole space.
    const model = randomModel(4, 10);
    expect(model.traits.truthRank).toBe(1);
    const { face, feasible } = exposeFeasibleFace(model.problem);
    expect(face.dimension).toBe(1);
    expect(feasible.status).toBe('OPTIMAL');
    // mathjs: the generating state has no weight off the face found (to rounding).
    expect(referenceEigenvalues(offFace(face.isometry as ComplexMatrix, model.truth))[3]).toBeLessThan(1e-12);
    expect(feasibleFace(model.problem, { exposures: face.exposures }).dimension).toBe(1);
  });

  it('the oracle on the exposed face gives dual bounds that hold at the known state up to its residual there', () => {
    const model = randomModel(8, 1, { face: true, truthRank: 4, intervals: false });
    const { face, oracle } = exposeFeasibleFace(model.problem);
    const restricted = restrictToFace(model.problem, face);
    const truthOnFace = conjugateAdjoint(face.isometry as ComplexMatrix, model.truth);
    // The known state, compressed onto the face, misses the constraints only by the face's tilt (facial reduction's
    // square-root sensitivity, docs/faces.md "Tilted kernels"). That is what a bound on the face can be off by.
    const violations = restricted.constraints.map((c) => {
      const value = traceProductReal(c.operator, truthOnFace);
      return Math.max(c.lower - value, value - c.upper, 0);
    });
    expect(Math.max(...violations)).toBeLessThan(1e-6);
    const traceDefect = Math.abs(referenceEigenvalues(truthOnFace).reduce((s, v) => s + v, 0) - 1);
    const rng = seededRandom(41);
    for (let k = 0; k < 3; k++) {
      const G = randomHermitian(face.dimension, rng);
      const result = oracle.minimize(G);
      expect(result.status).toBe('OPTIMAL');
      const bound = referenceDualBound(G, restricted.constraints, result.multipliersLower, result.multipliersUpper);
      // Weak duality at an approximately feasible τ ⪰ 0 (derivation: ⟨G,τ⟩ − bound ≥ λ_min(S)(Tr τ − 1) +
      // Σ y⁺(Tr Γτ − ℓ) − Σ y⁻(Tr Γτ − u)), with the dual bound recomputed by mathjs.
      let slack = 0;
      violations.forEach((v, i) => (slack += (result.multipliersLower[i] + result.multipliersUpper[i]) * v));
      let linear = 0;
      restricted.constraints.forEach((c, i) => (linear += result.multipliersLower[i] * c.lower - result.multipliersUpper[i] * c.upper));
      slack += Math.abs(bound - linear) * traceDefect;
      expect(bound).toBeLessThanOrEqual(traceProductReal(G, truthOnFace) + slack + 1e-12);
      expect(result.primalValue - bound).toBeLessThan(1e-5);
    }
  });

  it('a problem with a full-rank feasible state needs no exposure', () => {
    const model = randomModel(8, 2, { face: false, truthRank: 8 });
    const { face, feasible } = exposeFeasibleFace(model.problem);
    expect(face.exposures).toEqual([]);
    expect(face.dimension).toBe(feasibleFace(model.problem).dimension);
    expect(feasible.status).toBe('OPTIMAL');
  });

  it('feasibleFace rejects tampered exposures', () => {
    const model = randomModel(8, 3, { face: true, truthRank: 2, intervals: false });
    const { face } = exposeFeasibleFace(model.problem);
    const multipliers = face.exposures[0].multipliers;
    expect(() => feasibleFace(model.problem, { exposures: [{ multipliers: multipliers.map((y) => -y) }] })).toThrow(FaceExposureError);
    expect(() => feasibleFace(model.problem, { exposures: [{ multipliers: multipliers.map(() => 0) }] })).toThrow(/all zero/);
    expect(() => feasibleFace(model.problem, { exposures: [{ multipliers: multipliers.slice(1) }] })).toThrow(/finite numbers/);
    const withInterval = randomModel(8, 3, { face: true, truthRank: 2, intervals: true });
    const intervalIndex = withInterval.problem.constraints.findIndex((c) => c.lower !== c.upper);
    const onInterval = new Array<number>(withInterval.problem.constraints.length).fill(0);
    onInterval[intervalIndex] = 1;
    expect(() => feasibleFace(withInterval.problem, { exposures: [{ multipliers: onInterval }] })).toThrow(/not an equality/);
  });
});
