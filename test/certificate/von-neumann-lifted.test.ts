// von Neumann's value and ∇F blocks at a point lifted off an exposed face, formed in double-double
// (src/certificate/von-neumann-lifted.ts through double-double-lift.ts), against F from ml-matrix's eigendecomposition
// and its central differences (common practice); the range basis's congruence bound against ml-matrix's QR.
import { Matrix, QrDecomposition } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { faceBlocks, liftedPoint } from '../../src/certificate/lifted-face.js';
import { liftInDoubleDouble } from '../../src/certificate/double-double-lift.js';
import { rangeCongruence, vonNeumannBranch } from '../../src/certificate/von-neumann-lifted.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { DdMatrix } from '../../src/linear-algebra/double-double-matrix.js';
import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  frobeniusNorm,
  hermitianPart,
  multiply,
  subtract,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import type { BranchSupport } from '../../src/objectives/branch-supports.js';
import { createObjective } from '../../src/objectives/index.js';
import { compressToFace, feasibleFace } from '../../src/problem/feasible-face.js';
import { dropInactiveBounds } from '../../src/problem/inactive-bounds.js';
import { matrixFromJson } from '../../src/problem/json.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { centralSlope, referenceFunction } from './reference-functions.js';

const request = { kind: 'von-neumann' } as const;

/** X_c = Σ_j K_j·ρ·K_j† on the branch's support. */
function output(support: BranchSupport, rho: ComplexMatrix): ComplexMatrix {
  const x = ComplexMatrix.zeros(support.dimension);
  for (const k of support.krausOperators) addScaledInPlace(x, conjugate(k, rho), 1);
  return hermitianPart(x);
}

/** Z(X): the key blocks of X, zero elsewhere. */
function pinched(support: BranchSupport, x: ComplexMatrix): ComplexMatrix {
  const out = ComplexMatrix.zeros(support.dimension);
  const m = support.dimension;
  support.blockOffsets.forEach((o, b) => {
    for (let i = o; i < o + support.blockSizes[b]; i++) {
      for (let j = o; j < o + support.blockSizes[b]; j++) {
        out.re[i * m + j] = x.re[i * m + j];
        out.im[i * m + j] = x.im[i * m + j];
      }
    }
  });
  return out;
}

/** t·ln t with 0·ln 0 = 0; an output rank deficient on its support has eigenvalues at rounding level there. */
const entropyTerm = (t: number) => (t > 1e-13 ? t * Math.log(t) : 0);
/** ln on the output's range (eigenvalues at rounding level are its kernel), 0 off it. */
const rangeLog = (t: number) => (t > 1e-13 ? Math.log(t) : 0);

/** F = Σ_c [Tr X ln X − Tr Z(X) ln Z(X)]/ln 2 − f(c)·Tr X_c (docs/math.md §3), every logarithm from ml-matrix. */
function referenceValue(objective: ReturnType<typeof createObjective>, rho: ComplexMatrix): number {
  let value = 0;
  for (const support of objective.supports) {
    const x = output(support, rho);
    const id = ComplexMatrix.identity(support.dimension);
    value += (traceProductReal(referenceFunction(x, entropyTerm), id) - traceProductReal(referenceFunction(pinched(support, x), entropyTerm), id)) / Math.LN2;
    value -= support.score * traceProductReal(x, id);
  }
  return value;
}

// d16#2: every output has full rank on its support; d16#18: its keyed output (one 17 × 16 Kraus operator) does not.
describe.each([
  { d: 16, seed: 2 },
  { d: 16, seed: 18 },
])('von Neumann at a lifted point in double-double (d$d#$seed)', ({ d, seed }) => {
  const model = randomModel(d, seed);
  const active = dropInactiveBounds(model.problem).problem;
  const optimum = solve(model.problem, request, { gapTolerance: 1e-4 });
  const face = feasibleFace(active, { exposures: optimum.certificate!.faceExposures });
  const blocks = faceBlocks(face);
  const objective = createObjective(active, request);
  const point = liftedPoint(face, blocks, compressToFace(face, matrixFromJson(optimum.finalState!, 'finalState')), 1e-4);

  it('F agrees with ml-matrix to 1e-12, the constant is Euler’s 0, and the face block matches central differences to 1e-6', () => {
    expect(objective.supports.some((s) => s.outputRange !== null)).toBe(seed === 18);
    const terms = liftInDoubleDouble(objective, point, blocks.face, blocks.complement, vonNeumannBranch);
    expect(Math.abs(terms.value - referenceValue(objective, point))).toBeLessThan(1e-12);
    expect(terms.constant).toBe(0);
    // Euler's identity (F is homogeneous of degree 1): ⟨∇F, ρ'⟩ = F.
    expect(Math.abs(traceProductReal(terms.gradient, point) - terms.value)).toBeLessThan(1e-12);
    const rng = seededRandom(8);
    const step = 1e-6;
    for (let trial = 0; trial < 3; trial++) {
      const direction = randomHermitian(blocks.face.cols, rng);
      const slope = centralSlope((rho) => referenceValue(objective, rho), point, blocks.face, direction, step);
      const paired = traceProductReal(terms.face, direction);
      expect(Math.abs(slope - paired)).toBeLessThan(1e-6 * (1 + Math.abs(paired)));
    }
  });
});

describe('an output rank deficient on its support: the range basis as a congruence (derived; docs/faces.md)', () => {
  const model = randomModel(16, 18);
  const objective = createObjective(dropInactiveBounds(model.problem).problem, request);
  const support = objective.supports.find((s) => s.outputRange !== null) as BranchSupport;
  const range = support.outputRange as ComplexMatrix;
  const rng = seededRandom(23);
  const rho = randomDensity(16, rng);
  const x = output(support, rho);
  // The gradient on the support from ml-matrix: ln on X's range minus ln Z(X), over ln 2, minus the score.
  const expected = subtract(referenceFunction(x, rangeLog), referenceFunction(pinched(support, x), rangeLog));
  const reference = ComplexMatrix.zeros(support.dimension);
  addScaledInPlace(reference, expected, 1 / Math.LN2);
  for (let i = 0; i < support.dimension; i++) reference.re[i * support.dimension + i] -= support.score;

  it('the stated gradient error covers a basis moved by 1e-6 inside the range, and is within 20× of the move', () => {
    const exact = vonNeumannBranch(support, DdMatrix.from(x), 0);
    expect(frobeniusNorm(subtract(exact.gradient.toDouble(), reference))).toBeLessThan(1e-9);
    expect(exact.gradientError).toBeLessThan(1e-9);
    const h = randomHermitian(range.cols, rng);
    const moved = range.clone();
    addScaledInPlace(moved, multiply(range, h), 1e-6 / frobeniusNorm(h));
    const branch = vonNeumannBranch({ ...support, outputRange: moved }, DdMatrix.from(x), 0);
    const deviation = frobeniusNorm(subtract(branch.gradient.toDouble(), reference));
    expect(deviation).toBeLessThanOrEqual(branch.gradientError);
    // Without the congruence terms the bound would be below 1e-9 (the line above), far under the deviation.
    expect(deviation).toBeGreaterThan(branch.gradientError / 20);
  });

  it('rangeCongruence bounds ‖W†W − 1‖_F for W = R_t†R with R_t from ml-matrix’s QR of the Kraus operator', () => {
    // A 7 × 3 real operator with singular values 1, 1.5, 2: its range is exact data (ml-matrix's methods act in place).
    const q = new QrDecomposition(Matrix.rand(7, 7, { random: rng })).orthogonalMatrix;
    const basis = q.subMatrix(0, 6, 0, 2);
    const outside = q.subMatrix(0, 6, 3, 5);
    const synthetic = { dimension: 7, krausOperators: [toComplex(basis.mmul(Matrix.diag([1, 1.5, 2])))] } as unknown as BranchSupport;
    const cases: [string, Matrix][] = [
      ['a non-isometric basis inside the range', basis.mmul(Matrix.eye(3).add(Matrix.rand(3, 3, { random: rng }).mul(1e-6)))],
      ['a basis tilted out of the range', basis.clone().mul(Math.cos(1e-5)).add(outside.clone().mul(Math.sin(1e-5)))],
    ];
    for (const [name, tilted] of cases) {
      const w = basis.transpose().mmul(tilted);
      const actual = w.transpose().mmul(w).sub(Matrix.eye(3)).norm('frobenius');
      const bound = rangeCongruence(synthetic, toComplex(tilted));
      expect(bound, name).toBeGreaterThanOrEqual(actual);
      expect(bound, name).toBeLessThan(100 * actual);
    }
  });
});

function toComplex(m: Matrix): ComplexMatrix {
  const out = new ComplexMatrix(m.rows, m.columns);
  for (let i = 0; i < m.rows; i++) for (let j = 0; j < m.columns; j++) out.re[i * m.columns + j] = m.get(i, j);
  return out;
}
