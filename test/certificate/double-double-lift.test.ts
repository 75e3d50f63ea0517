// The Petz kinds' value and ∇F blocks at a point lifted off an exposed face, formed in double-double
// (src/certificate/double-double-lift.ts with petz-down-lifted.ts and petz-up-lifted.ts), against F from ml-matrix's
// eigendecomposition (reference-functions.ts) and its central differences along face directions (common practice), on
// the random suite's d16#2.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { faceBlocks, liftedPoint } from '../../src/certificate/lifted-face.js';
import { liftInDoubleDouble } from '../../src/certificate/double-double-lift.js';
import { petzDownBranch } from '../../src/certificate/petz-down-lifted.js';
import { petzUpBranch, sandwichedBranch } from '../../src/certificate/petz-up-lifted.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  hermitianPart,
  scale,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import { branchWeight, createObjective, logCoefficient } from '../../src/objectives/index.js';
import { feasibleFace, compressToFace } from '../../src/problem/feasible-face.js';
import { dropInactiveBounds } from '../../src/problem/inactive-bounds.js';
import { matrixFromJson } from '../../src/problem/json.js';
import type { EntropyRequest } from '../../src/problem/model.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';
import { centralSlope, referenceFunction } from './reference-functions.js';

const KINDS = [
  { request: { kind: 'petz-down', alpha: 1.5 } as EntropyRequest, branch: petzDownBranch },
  { request: { kind: 'petz-up', alpha: 1.5 } as EntropyRequest, branch: petzUpBranch },
  { request: { kind: 'sandwiched-up', alpha: 1.5 } as EntropyRequest, branch: sandwichedBranch },
];

// d16#2: every output has full rank on its support; d16#18: its keyed output (one 17 × 16 Kraus operator) does not, so
// M = Y^s·X·Y^s has one zero eigenvalue, cut off in t^ω and t^{ω−1} (Petz-down has no such term and refuses it).
const CASES = [
  ...KINDS.map((kind) => ({ ...kind, seed: 2 })),
  ...KINDS.filter((kind) => kind.request.kind !== 'petz-down').map((kind) => ({ ...kind, seed: 18 })),
];

describe.each(CASES)('$request.kind at a lifted point in double-double (d16#$seed)', ({ request, branch, seed }) => {
  const model = randomModel(16, seed);
  const active = dropInactiveBounds(model.problem).problem;
  const exposures = solve(model.problem, { kind: 'von-neumann' }, { gapTolerance: 1e-3 }).certificate!.faceExposures;
  const face = feasibleFace(active, { exposures });
  const blocks = faceBlocks(face);
  const objective = createObjective(active, request);
  // A face state: the von Neumann optimum compressed to the face (any face state serves the comparison).
  const optimum = solve(model.problem, { kind: 'von-neumann' }, { gapTolerance: 1e-4 });
  const faceState = compressToFace(face, matrixFromJson(optimum.finalState!, 'finalState'));

  // Sandwiched-up is linearized at a fixed τ': the inner optimum at the μ = 1e-4 point, from the objective itself.
  const point = liftedPoint(face, blocks, faceState, 1e-4);
  const tau = request.kind === 'sandwiched-up' ? objective.evaluate(point, { assumeFullRank: true }).reference : undefined;

  /**
   * F = c·log₂ Q with every power from ml-matrix: Q = Σ_c Tr[X_c^β·Z(X_c)^{1−β}] (Petz-down, β = 2 − α),
   * Σ_c Tr[(Y^s·X_c·Y^s)^ω] with Y = Z(X_c), ω = 1/α, s = (1 − ω)/(2ω) (Petz-up), or the same with Y = τ' and
   * ω = α/(2α − 1), a branch without key taking t^{1−ω}·(Tr X)^ω (sandwiched-up at fixed τ').
   */
  const referenceValue = (rho: ComplexMatrix, referenceStates = tau) => {
    const alpha = request.alpha as number;
    const beta = 2 - alpha;
    const omega = request.kind === 'sandwiched-up' ? alpha / (2 * alpha - 1) : 1 / alpha;
    const s = (1 - omega) / (2 * omega);
    let q = 0;
    for (const [c, support] of objective.supports.entries()) {
      const x = ComplexMatrix.zeros(support.dimension);
      for (const k of support.krausOperators) addScaledInPlace(x, conjugate(k, rho), 1);
      const weighted = scale(hermitianPart(x), branchWeight(objective.request, support.score));
      const pinched = ComplexMatrix.zeros(support.dimension);
      support.blockOffsets.forEach((o, b) => {
        for (let i = o; i < o + support.blockSizes[b]; i++) {
          for (let j = o; j < o + support.blockSizes[b]; j++) {
            pinched.re[i * pinched.cols + j] = weighted.re[i * weighted.cols + j];
            pinched.im[i * pinched.cols + j] = weighted.im[i * weighted.cols + j];
          }
        }
      });
      // An exactly zero eigenvalue (d16#18's M) comes out of ml-matrix near ±1e-17, whose power (1e-17)^ω ≈ 5e-12 would
      // be noise: eigenvalues below 1e-13 are taken as the zeros they are (every other one here is far above it).
      const clip = (p: number) => (t: number) => (t > 1e-13 ? t ** p : 0);
      if (referenceStates && support.blockSizes.length === 1 && referenceStates[c][0].rows === 1) {
        const t = referenceStates[c][0].re[0];
        q += t ** (1 - omega) * traceProductReal(weighted, ComplexMatrix.identity(support.dimension)) ** omega;
      } else if (referenceStates) {
        const referenceState = ComplexMatrix.zeros(support.dimension);
        support.blockOffsets.forEach((o, b) => {
          const block = hermitianPart(referenceStates[c][b]);
          for (let i = 0; i < block.rows; i++) {
            for (let j = 0; j < block.cols; j++) {
              referenceState.re[(o + i) * referenceState.cols + o + j] = block.re[i * block.cols + j];
              referenceState.im[(o + i) * referenceState.cols + o + j] = block.im[i * block.cols + j];
            }
          }
        });
        const root = referenceFunction(referenceState, clip(s));
        q += traceProductReal(referenceFunction(hermitianPart(conjugate(root, weighted)), clip(omega)), ComplexMatrix.identity(support.dimension));
      } else if (request.kind === 'petz-down') {
        q += traceProductReal(referenceFunction(weighted, clip(beta)), referenceFunction(pinched, clip(1 - beta)));
      } else {
        const root = referenceFunction(pinched, clip(s));
        q += traceProductReal(referenceFunction(hermitianPart(conjugate(root, weighted)), clip(omega)), ComplexMatrix.identity(support.dimension));
      }
    }
    return logCoefficient(objective.request) * Math.log2(q);
  };

  it('F agrees with ml-matrix to 1e-12, and the face block with its central differences along the face to 1e-6', () => {
    const terms = liftInDoubleDouble(objective, point, blocks.face, blocks.complement, branch, tau);
    expect(Math.abs(terms.value - referenceValue(point))).toBeLessThan(1e-12);
    const rng = seededRandom(8);
    const step = 1e-6;
    for (let trial = 0; trial < 3; trial++) {
      const d = randomHermitian(blocks.face.cols, rng);
      const slope = centralSlope((rho) => referenceValue(rho), point, blocks.face, d, step);
      const paired = traceProductReal(terms.face, d);
      expect(Math.abs(slope - paired)).toBeLessThan(1e-6 * (1 + Math.abs(paired)));
    }
    if (!tau) return;
    // ∇_τF: Euler's identity for Q's degree 1 − ω in τ (⟨∇_τF, τ'⟩ = c(1 − ω)/ln 2; derived from homogeneity) and
    // central differences of the ml-matrix F along a random key-block-diagonal direction of τ.
    const alpha = request.alpha as number;
    const omega = alpha / (2 * alpha - 1);
    let pairing = 0;
    terms.referenceGradient.forEach((branchBlocks, c) => branchBlocks.forEach((g, b) => (pairing += traceProductReal(g, hermitianPart(tau[c][b])))));
    const coefficient = (2 * alpha - 1) / (1 - alpha);
    expect(Math.abs(pairing - (coefficient * (1 - omega)) / Math.LN2)).toBeLessThan(1e-9);
    const directions = tau.map((branchBlocks) => branchBlocks.map((g) => hermitianPart(randomHermitian(g.rows, rng))));
    const moved = (sign: number) => tau.map((branchBlocks, c) => branchBlocks.map((g, b) => {
      const out = hermitianPart(g);
      addScaledInPlace(out, directions[c][b], sign * 1e-9);
      return out;
    }));
    const slope = (referenceValue(point, moved(1)) - referenceValue(point, moved(-1))) / 2e-9;
    let expected = 0;
    terms.referenceGradient.forEach((branchBlocks, c) => branchBlocks.forEach((g, b) => (expected += traceProductReal(g, directions[c][b]))));
    expect(Math.abs(slope - expected)).toBeLessThan(1e-5 * (1 + Math.abs(expected)));
  });
});
