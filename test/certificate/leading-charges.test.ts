// The closed-form charge of the margin's split over the smallest eigenvectors of S (von Neumann; docs/convergence.md,
// "Where the conditioning reaches the bound"): for every leading block W_k of a basis, the change of W_k†∇F·W_k under
// backward errors of the outputs and of their pinched blocks stays below `vonNeumannLeadingCharges`, with ln taken
// from ml-matrix's symmetric eigendecomposition of the real embedding as the outside reference.
import { describe, expect, it } from 'vitest';
import { vonNeumannLeadingCharges } from '../../src/certificate/face-block-charge.js';
import {
  addScaledInPlace,
  adjoint,
  columns,
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  hermitianPart,
  multiply,
  scale,
} from '../../src/linear-algebra/complex-matrix.js';
import { eigh } from '../../src/linear-algebra/eigen.js';
import { createObjective } from '../../src/objectives/index.js';
import { pinchedBlocks } from '../../src/objectives/spectral-blocks.js';
import { randomHermitian, randomUnitary, seededRandom } from '../helpers/random.js';
import { randomInstrumentProblem } from '../objectives/fixtures.js';
import { operatorNorm, referenceFunction } from './reference-functions.js';

/** ln H for positive definite H (the outside reference). */
function referenceLog(h: ComplexMatrix): ComplexMatrix {
  return referenceFunction(h, Math.log);
}

/** ln X − ln Z(X) on the support (Z the key-map pinching, embedded block-diagonally). */
function outputGradient(x: ComplexMatrix, sizes: readonly number[], offsets: readonly number[]): ComplexMatrix {
  const g = referenceLog(x);
  pinchedBlocks(x, sizes, offsets).forEach((block, b) => {
    const log = referenceLog(block);
    for (let i = 0; i < sizes[b]; i++) {
      for (let j = 0; j < sizes[b]; j++) {
        g.re[(offsets[b] + i) * x.rows + offsets[b] + j] -= log.re[i * sizes[b] + j];
        g.im[(offsets[b] + i) * x.rows + offsets[b] + j] -= log.im[i * sizes[b] + j];
      }
    }
  });
  return g;
}

function unitHermitian(h: ComplexMatrix): ComplexMatrix {
  return scale(h, 1 / frobeniusNorm(h));
}

describe('the leading-block charges of ∇F (von Neumann; Daleckii–Krein over outputs and pinched blocks)', () => {
  const rng = seededRandom(17);
  const problem = randomInstrumentProblem(2, 2, [4], [2], [0], rng);
  const objective = createObjective(problem, { kind: 'von-neumann' });
  const support = objective.supports[0];
  const kraus = support.krausOperators;
  // A boundary optimum's shape: the output has an eigenvalue 1e-8 on a vector inside the first key block, so the
  // pinched block Z_0(X) has it too. X is chosen in support coordinates and ρ = K†XK (K is unitary here).
  const x0 = hermitianPart(conjugate(randomUnitary(3, rng), ComplexMatrix.diagonal([0.2, 0.3, 0.5 - 1e-8])));
  const target = ComplexMatrix.zeros(4);
  target.re[0] = 1e-8;
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      target.re[(i + 1) * 4 + j + 1] = x0.re[i * 3 + j];
      target.im[(i + 1) * 4 + j + 1] = x0.im[i * 3 + j];
    }
  }
  const rho = hermitianPart(conjugateAdjoint(kraus[0], target));
  const output = objective.branchOutputs(rho)[0];
  const rhoEigen = eigh(rho);
  // ρ's eigenvectors from the largest down: the leading blocks stay on the outputs' large eigenvalues until k = 4.
  const basis = multiply(rhoEigen.vectors, ComplexMatrix.from([[0, 0, 0, 1], [0, 0, 1, 0], [0, 1, 0, 0], [1, 0, 0, 0]]));
  const scaleN = 64 * 4 * 2 ** -53;
  // The backward-error size the charge assumes (face-block-charge.ts, outputSize): ‖X‖_F + ‖ρ‖_F·Σ_j ‖K_j‖_F².
  const error = scaleN * (frobeniusNorm(output) + frobeniusNorm(rho) * kraus.reduce((w, k) => w + frobeniusNorm(k) ** 2, 0));
  const { within: charges, cross } = vonNeumannLeadingCharges(objective, rho, basis, scaleN);
  const outputEigen = eigh(output);
  const smallest = conjugate(outputEigen.vectors, ComplexMatrix.diagonal([1, 0, 0, 0]));
  // Errors of X (they move ln X and, through the pinching, ln Z(X))…
  const ofOutput = [unitHermitian(randomHermitian(4, rng)), unitHermitian(randomHermitian(4, rng)), smallest].map((e) => scale(e, error));
  // …and of the first pinched block's own eigendecomposition.
  const ofBlock = [unitHermitian(randomHermitian(2, rng)), ComplexMatrix.from([[1, 0], [0, 0]])].map((e) => scale(e, error));
  // The first-order change along a perturbation (‖E‖_F = error) as a central difference with steps of 3e-11 in
  // Frobenius norm: the reference logs' own rounding (u·‖X‖/λ_min ≈ 2e-8 each) then costs a relative 2e-6 of the
  // quotient, and the second-order remainder (step/λ_min)² ≈ 1e-5; FIRST_ORDER_SLACK is ten times their sum.
  const step = 3e-11 / error;
  /** W_rows†·(Σ_j K_j†·change·K_j)·W_cols / (2·step·ln 2), W_rows and W_cols blocks of the basis' columns. */
  const blockNorm = (change: ComplexMatrix, left: ComplexMatrix, right: ComplexMatrix) => {
    const total = ComplexMatrix.zeros(left.cols, right.cols);
    for (const kj of kraus) addScaledInPlace(total, multiply(multiply(adjoint(multiply(kj, left)), change), multiply(kj, right)), 1 / (2 * step * Math.LN2));
    return operatorNorm(total);
  };
  const leadingBlock = (change: ComplexMatrix, k: number) => blockNorm(change, columns(basis, 0, k), columns(basis, 0, k));
  const crossBlock = (change: ComplexMatrix, k: number) => blockNorm(change, columns(basis, k, 4), columns(basis, 0, k));
  const outputChange = (perturbation: ComplexMatrix, k: number, block = leadingBlock) => {
    const change = outputGradient(hermitianPart(addScaled(output, perturbation, step)), support.blockSizes, support.blockOffsets);
    addScaledInPlace(change, outputGradient(hermitianPart(addScaled(output, perturbation, -step)), support.blockSizes, support.blockOffsets), -1);
    return block(change, k);
  };
  // Separate backward errors of X's eigendecomposition (moving ln X only) and of the first pinched block's (moving
  // ln Z_0 only), as the error model has them.
  const separateChange = (ofX: ComplexMatrix | null, ofZ: ComplexMatrix | null, k: number, block = leadingBlock) => {
    const change = ComplexMatrix.zeros(4);
    if (ofX) {
      addScaledInPlace(change, referenceLog(hermitianPart(addScaled(output, ofX, step))), 1);
      addScaledInPlace(change, referenceLog(hermitianPart(addScaled(output, ofX, -step))), -1);
    }
    if (ofZ) {
      const [size] = support.blockSizes;
      const block = pinchedBlocks(output, support.blockSizes, support.blockOffsets)[0];
      const moved = referenceLog(hermitianPart(addScaled(block, ofZ, -step)));
      addScaledInPlace(moved, referenceLog(hermitianPart(addScaled(block, ofZ, step))), -1);
      for (let i = 0; i < size; i++) {
        for (let j = 0; j < size; j++) {
          change.re[i * 4 + j] += moved.re[i * size + j];
          change.im[i * 4 + j] += moved.im[i * size + j];
        }
      }
    }
    return block(change, k);
  };

  it('bound the change of every leading block W_k†∇F·W_k for errors of the output and of its pinched block', () => {
    expect(support.outputRange).toBeNull();
    expect(support.blockOffsets[0]).toBe(0);
    expect(outputEigen.values[0]).toBeLessThan(1e-7);
    for (let k = 1; k <= 4; k++) {
      for (const e of ofOutput) expect(outputChange(e, k)).toBeLessThanOrEqual(charges[k] * (1 + FIRST_ORDER_SLACK));
      for (const e of ofBlock) expect(separateChange(null, e, k)).toBeLessThanOrEqual(charges[k] * (1 + FIRST_ORDER_SLACK));
      expect(separateChange(ofOutput[2], scale(ofBlock[1], -1), k)).toBeLessThanOrEqual(charges[k] * (1 + FIRST_ORDER_SLACK));
    }
  });

  it('bound the cross block W_k⊥†∇F·W_k the same way, far below the Weyl charge although W_k⊥ holds the small eigenvalue', () => {
    for (let k = 1; k <= 3; k++) {
      for (const e of ofOutput) expect(outputChange(e, k, crossBlock)).toBeLessThanOrEqual(cross[k] * (1 + FIRST_ORDER_SLACK));
      for (const e of ofBlock) expect(separateChange(null, e, k, crossBlock)).toBeLessThanOrEqual(cross[k] * (1 + FIRST_ORDER_SLACK));
      expect(separateChange(ofOutput[2], scale(ofBlock[1], -1), k, crossBlock)).toBeLessThanOrEqual(cross[k] * (1 + FIRST_ORDER_SLACK));
    }
    const weyl = (2 * error * kraus.reduce((w, k) => w + frobeniusNorm(k) ** 2, 0)) / outputEigen.values[0] / Math.LN2;
    expect(cross[3]).toBeLessThan(weyl / 1000);
    // A cross perturbation between the small eigenvector and the large ones reaches a sizeable share of it.
    const between = scale(unitHermitian(hermitianPart(multiply(outputEigen.vectors, multiply(ComplexMatrix.from([[0, 1, 1, 1], [1, 0, 0, 0], [1, 0, 0, 0], [1, 0, 0, 0]]), adjoint(outputEigen.vectors))))), error);
    expect(outputChange(between, 3, crossBlock)).toBeGreaterThan(cross[3] / 100);
  });

  it('stay far below the Weyl charge while W_k avoids the small eigenvalue, and reach its scale once W_k takes it in', () => {
    // Weyl: ‖δ ln X‖ ≤ error/λ_min(X), pulled back through Σ_j ‖K_j‖² (outputs and pinched blocks: twice).
    const weyl = (2 * error * kraus.reduce((w, k) => w + frobeniusNorm(k) ** 2, 0)) / outputEigen.values[0] / Math.LN2;
    expect(charges[3]).toBeLessThan(weyl / 1000);
    expect(charges[4]).toBeGreaterThan(weyl / 100);
    // Opposite errors of X's and of Z_0's eigendecompositions along the shared small eigenvector attain the fourth
    // charge: a charge without the pinched blocks (about half) would not cover them.
    expect(separateChange(ofOutput[2], scale(ofBlock[1], -1), 4)).toBeGreaterThan(charges[4] * 0.9);
  });
});

const FIRST_ORDER_SLACK = 1e-4;

function addScaled(a: ComplexMatrix, b: ComplexMatrix, weight: number): ComplexMatrix {
  const out = a.clone();
  addScaledInPlace(out, b, weight);
  return out;
}
