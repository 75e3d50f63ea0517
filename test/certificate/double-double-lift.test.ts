// The Petz kinds' value and ∇F blocks at a point lifted off an exposed face, formed in double-double
// (src/certificate/double-double-lift.ts with petz-down-lifted.ts and petz-up-lifted.ts), against F from ml-matrix's
// eigendecomposition (reference-functions.ts) and its central differences along face directions (common practice), on
// the random suite's d16#2.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { faceBlocks, liftedPoint } from '../../src/certificate/lifted-face.js';
import { liftInDoubleDouble } from '../../src/certificate/double-double-lift.js';
import { petzDownBranch } from '../../src/certificate/petz-down-lifted.js';
import { petzUpBranch } from '../../src/certificate/petz-up-lifted.js';
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
import { referenceFunction } from './reference-functions.js';

const KINDS = [
  { request: { kind: 'petz-down', alpha: 1.5 } as EntropyRequest, branch: petzDownBranch },
  { request: { kind: 'petz-up', alpha: 1.5 } as EntropyRequest, branch: petzUpBranch },
];

describe.each(KINDS)('$request.kind at a lifted point in double-double (d16#2)', ({ request, branch }) => {
  const model = randomModel(16, 2);
  const active = dropInactiveBounds(model.problem).problem;
  const exposures = solve(model.problem, { kind: 'von-neumann' }, { gapTolerance: 1e-3 }).certificate!.faceExposures;
  const face = feasibleFace(active, { exposures });
  const blocks = faceBlocks(face);
  const objective = createObjective(active, request);
  // A face state: the von Neumann optimum compressed to the face (any face state serves the comparison).
  const optimum = solve(model.problem, { kind: 'von-neumann' }, { gapTolerance: 1e-4 });
  const faceState = compressToFace(face, matrixFromJson(optimum.finalState!, 'finalState'));

  /**
   * F = c·log₂ Q with every power from ml-matrix: Q = Σ_c Tr[X_c^β·Z(X_c)^{1−β}] (Petz-down, β = 2 − α) or
   * Σ_c Tr[(Y^s·X_c·Y^s)^ω] with Y = Z(X_c), ω = 1/α, s = (1 − ω)/(2ω) (Petz-up).
   */
  const referenceValue = (rho: ComplexMatrix) => {
    const alpha = request.alpha as number;
    const beta = 2 - alpha;
    const omega = 1 / alpha;
    const s = (1 - omega) / (2 * omega);
    let q = 0;
    for (const support of objective.supports) {
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
      const clip = (p: number) => (t: number) => Math.max(t, 0) ** p;
      if (request.kind === 'petz-down') {
        q += traceProductReal(referenceFunction(weighted, clip(beta)), referenceFunction(pinched, clip(1 - beta)));
      } else {
        const root = referenceFunction(pinched, clip(s));
        q += traceProductReal(referenceFunction(hermitianPart(conjugate(root, weighted)), clip(omega)), ComplexMatrix.identity(support.dimension));
      }
    }
    return logCoefficient(objective.request) * Math.log2(q);
  };

  it('F agrees with ml-matrix to 1e-12, and the face block with its central differences along the face to 1e-6', () => {
    const point = liftedPoint(face, blocks, faceState, 1e-4);
    const terms = liftInDoubleDouble(objective, point, blocks.face, blocks.complement, branch);
    expect(Math.abs(terms.value - referenceValue(point))).toBeLessThan(1e-12);
    const rng = seededRandom(8);
    const step = 1e-6;
    for (let trial = 0; trial < 3; trial++) {
      const d = randomHermitian(blocks.face.cols, rng);
      const lifted = conjugate(blocks.face, d);
      const plus = point.clone();
      addScaledInPlace(plus, lifted, step);
      const minus = point.clone();
      addScaledInPlace(minus, lifted, -step);
      const slope = (referenceValue(plus) - referenceValue(minus)) / (2 * step);
      const paired = traceProductReal(terms.face, d);
      expect(Math.abs(slope - paired)).toBeLessThan(1e-6 * (1 + Math.abs(paired)));
    }
  });
});
