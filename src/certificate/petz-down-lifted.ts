// Petz-down F and ∇F at a point lifted off an exposed face, in double-double (docs/faces.md, "Petz-down lifted in
// double-double"): its linearization loss falls only like μ^{2−α}, so the lift needs μ ≈ 1e-14, where the branch
// outputs' small eigenvalues lie below a double eigensolver's absolute accuracy. Eigendecompositions, products and the
// Daleckii–Krein forms run in double-double; the scalar powers and divided differences in double, from eigenvalues
// rounded to double, each within ETA of its exact value relative to itself. Shared by the solver and the verifier.
import { ComplexMatrix, frobeniusNorm, multiply } from '../linear-algebra/complex-matrix.js';
import {
  DD_UNIT_ROUNDOFF,
  ddAddScaled,
  ddBlock,
  ddDaleckiiKrein,
  DdMatrix,
  ddHermitianEigen,
  ddMultiply,
  ddSpectral,
  ddTraceProduct,
  type DdEigen,
} from '../linear-algebra/double-double-matrix.js';
import { dividedDifferences, powerFunction } from '../linear-algebra/matrix-functions.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { gradedPullBack, pulledBackUnit } from './face-block-charge.js';
import { branchWeight, logCoefficient, type Objective } from '../objectives/index.js';

/**
 * Relative error of a power λ^p or a divided difference of t^p formed in double from a double-double eigenvalue
 * rounded to double (u/2), by Math.pow or the expm1/log1p quotient (a few ulps; from memory), with room.
 */
const ETA = 16 * UNIT_ROUNDOFF;
/** Relative error of one double-double product or sum of the package (Joldes, Muller & Popescu 2017), with room. */
const DD_STEP = 8 * DD_UNIT_ROUNDOFF;

/** ∇F over [P̂ | Q̂] and F at the point, with bounds on their errors. */
export interface PetzDownLiftedTerms {
  value: number;
  /** F − c/ln 2, the linearization's constant (Euler: ⟨∇F, ρ'⟩ = c/ln 2). */
  constant: number;
  /** ∇F rounded to double: for the solver's multipliers only. */
  gradient: ComplexMatrix;
  face: ComplexMatrix;
  cross: ComplexMatrix;
  complement: ComplexMatrix;
  /** Bounds on the operator-norm error of each block, and on the constant's error. */
  errors: { face: number; cross: number; complement: number; constant: number };
}

/** Σ_j K_j·A·K_j† with doubles K_j, in double-double. */
function branchOutput(kraus: readonly ComplexMatrix[], rho: DdMatrix): DdMatrix {
  let out = new DdMatrix(kraus[0].rows, kraus[0].rows);
  for (const k of kraus) {
    const kd = DdMatrix.from(k);
    out = ddAddScaled(out, ddMultiply(ddMultiply(kd, rho), kd, false, true), [0, 1]);
  }
  return out;
}

/** Places square blocks along the diagonal. */
function blockDiagonal(blocks: readonly DdMatrix[], size: number): DdMatrix {
  const out = new DdMatrix(size, size);
  let offset = 0;
  for (const b of blocks) {
    for (let i = 0; i < b.rows; i++) for (let j = 0; j < b.cols; j++) out.set(offset + i, offset + j, b.re(i, j), b.im(i, j));
    offset += b.rows;
  }
  return out;
}

/** The eigenvalues rounded to double. */
function rounded(e: DdEigen): Float64Array {
  return Float64Array.from(e.values, (v) => v[1] + v[0]);
}

/**
 * F = c·log₂ Q, Q = Σ_c Tr[X_c^β·Z(X_c)^{1−β}] (β = 2 − α, X_c the weighted branch output), and ∇F = c/(Q ln 2)·Σ_c
 * Σ_j K_j†·G_c·K_j with G_c = w_c·(D(t^β)(X_c)[Y_c^{1−β}] + Z(D(t^{1−β})(Y_c)[X_c^β])), Y_c = Z(X_c) (docs/math.md §3).
 * Errors per branch (Frobenius, on G_c; the pull-back Σ_j K_j†(·)K_j has norm ≤ 1 by completeness):
 * - the scalar functions: ETA·(‖A‖ + ‖B‖) on the two terms' own entries, plus max|Γ|·ETA·‖argument‖ for the
 *   powers each term takes as its argument (X^β, Y^{1−β});
 * - the eigendecompositions, exact for X + E_X and Y + E_Y with ‖E‖ ≤ their a posteriori residual: the powers move by
 *   max|f^[1]|·‖E‖, and the Daleckii–Krein maps by 2·max|f^[2]|·‖E‖·‖argument‖ (max|f^[2]| ≤ |f''|/2 at the lowest
 *   eigenvalue less ‖E‖);
 * - the double-double arithmetic of the products: DD_STEP per operation, times the inner dimension, on every norm.
 */
export function petzDownLiftedTerms(objective: Objective, rho: ComplexMatrix, face: ComplexMatrix, complement: ComplexMatrix): PetzDownLiftedTerms {
  const { alpha } = objective.request;
  const beta = 2 - alpha;
  const n = rho.rows;
  const rhoDd = DdMatrix.from(rho);
  let gradientQ = new DdMatrix(n, n);
  let quasiEntropy = 0;
  let quasiEntropyError = 0;
  let gradientError = 0;
  let faceError = 0;
  const stateDivided = powerFunction(beta);
  const pinchedDivided = powerFunction(1 - beta);
  for (const support of objective.supports) {
    const weight = branchWeight(objective.request, support.score);
    const m = support.dimension;
    const output = branchOutput(support.krausOperators, rhoDd);
    const outputNorm = output.frobeniusNorm();
    // Forming X in double-double: each entry a sum over the Kraus operators' products.
    const formingError = DD_STEP * 4 * (n + m) * support.krausOperators.reduce((s, k) => s + frobeniusNorm(k) ** 2, 0) * frobeniusNorm(rho);
    let g: DdMatrix;
    if (isKeyless(support)) {
      // Q̄(X‖X) = Tr X: gradient w·1 on the output, Tr X exact up to the forming error.
      let trace = 0;
      for (let i = 0; i < m; i++) trace += output.reHigh[i * m + i] + output.reLow[i * m + i];
      quasiEntropy += weight * trace;
      quasiEntropyError += weight * formingError * Math.sqrt(m);
      g = new DdMatrix(m, m);
      for (let i = 0; i < m; i++) g.reHigh[i * m + i] = weight;
    } else {
      if (support.outputRange) throw new RangeError('petz-down lifted bound: a branch output rank deficient on its support');
      const x = scaleDd(output, weight);
      const eigenX = ddHermitianEigen(x);
      const lambda = rounded(eigenX);
      const blocks = support.blockSizes.map((size, b) => ddHermitianEigen(ddBlock(x, support.blockOffsets[b], support.blockOffsets[b] + size, support.blockOffsets[b], support.blockOffsets[b] + size)));
      const mus = blocks.map(rounded);
      const errorX = eigenX.residual + weight * formingError;
      // Y = ⊕ Y_b: each block's eigenvalues move by its own residual; the whole by at most their sum (Frobenius).
      const errorY = blocks.reduce((sum, e) => sum + e.residual, 0) + weight * formingError;
      const lowX = lambda[0] - errorX;
      const lowY = Math.min(...mus.map((v, b) => v[0] - blocks[b].residual)) - weight * formingError;
      if (!(lowX > 0 && lowY > 0)) throw new RangeError('petz-down lifted bound: a branch output is not positive definite to its error');
      const statePower = ddSpectral(eigenX.vectors, Array.from(lambda, (t) => t ** beta));
      const pinchedPower = blockDiagonal(
        blocks.map((e, b) => ddSpectral(e.vectors, Array.from(mus[b], (t) => t ** (1 - beta)))),
        m,
      );
      const stateGamma = dividedDifferences(lambda, stateDivided.value, stateDivided.derivative, stateDivided.difference);
      const termA = ddDaleckiiKrein(eigenX.vectors, (i, j) => stateGamma[i * m + j], pinchedPower);
      const termB = blockDiagonal(
        blocks.map((e, b) => {
          const size = support.blockSizes[b];
          const gamma = dividedDifferences(mus[b], pinchedDivided.value, pinchedDivided.derivative, pinchedDivided.difference);
          const o = support.blockOffsets[b];
          return ddDaleckiiKrein(e.vectors, (i, j) => gamma[i * size + j], ddBlock(statePower, o, o + size, o, o + size));
        }),
        m,
      );
      const q = ddTraceProduct(statePower, pinchedPower);
      quasiEntropy += q[1] + q[0];
      const powerNorm = statePower.frobeniusNorm();
      const pinchedNorm = pinchedPower.frobeniusNorm();
      // The powers' errors: ETA on the values, the eigendecompositions through the slopes at the lowest eigenvalues.
      const statePowerError = ETA * powerNorm + beta * lowX ** (beta - 1) * errorX;
      const pinchedPowerError = ETA * pinchedNorm + (1 - beta) * lowY ** -beta * errorY;
      quasiEntropyError += statePowerError * pinchedNorm + powerNorm * pinchedPowerError + DD_STEP * m * powerNorm * pinchedNorm;
      const stateSlope = beta * lowX ** (beta - 1);
      const pinchedSlope = (1 - beta) * lowY ** -beta;
      const stateCurvature = (beta * (1 - beta) * lowX ** (beta - 2)) / 2;
      const pinchedCurvature = (beta * (1 - beta) * lowY ** (-beta - 1)) / 2;
      // U·f·U† with U unitary only to ‖U†U − 1‖ ≤ residual/‖X‖: at most twice that on every formed matrix.
      const blockNorms = support.blockSizes.map((size, b) => ddBlock(x, support.blockOffsets[b], support.blockOffsets[b] + size, support.blockOffsets[b], support.blockOffsets[b] + size).frobeniusNorm());
      const defect =
        eigenX.residual / Math.max(weight * outputNorm, Number.MIN_VALUE) +
        Math.max(...blocks.map((e, b) => e.residual / Math.max(blockNorms[b], Number.MIN_VALUE)));
      const normA = termA.frobeniusNorm();
      const normB = termB.frobeniusNorm();
      gradientError +=
        weight *
        (ETA * (normA + normB) +
          stateSlope * pinchedPowerError +
          pinchedSlope * statePowerError +
          2 * stateCurvature * errorX * pinchedNorm +
          2 * pinchedCurvature * errorY * powerNorm +
          DD_STEP * 8 * m * (normA + normB) +
          4 * defect * (normA + normB + stateSlope * pinchedNorm + pinchedSlope * powerNorm));
      // The face block, graded: both Daleckii–Krein maps seen through N_j = K_jP̂ (face-block-charge.ts).
      const maps = support.krausOperators.map((k) => multiply(k, face));
      const doubleEigen = (e: DdEigen) => ({ values: rounded(e), vectors: e.vectors.toDouble() });
      const scaleM = BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF;
      const whole = { blockOffsets: [0], blockSizes: [m] } as unknown as BranchSupport;
      faceError +=
        weight *
        (gradedPullBack([doubleEigen(eigenX)], whole, maps, beta, pinchedPowerError, pinchedNorm, errorX, scaleM) +
          gradedPullBack(blocks.map(doubleEigen), support, maps, 1 - beta, statePowerError, powerNorm, errorY, scaleM) +
          pulledBackUnit(maps, scaleM) * (ETA * (normA + normB) + DD_STEP * 8 * m * (normA + normB) + 4 * defect * (normA + normB)));
      g = scaleDd(ddAddScaled(termA, termB, [0, 1]), weight);
    }
    for (const k of support.krausOperators) {
      const kd = DdMatrix.from(k);
      gradientQ = ddAddScaled(gradientQ, ddMultiply(ddMultiply(kd, g, true), kd), [0, 1]);
    }
    const pullBackError = DD_STEP * 8 * (n + m) * g.frobeniusNorm() * support.krausOperators.reduce((s, k) => s + frobeniusNorm(k) ** 2, 0);
    gradientError += pullBackError;
    faceError += pullBackError;
  }
  const coefficient = logCoefficient(objective.request);
  const factor = coefficient / (quasiEntropy * Math.LN2);
  const relativeQ = quasiEntropyError / quasiEntropy;
  const gradientF = scaleDd(gradientQ, factor);
  const faceDd = DdMatrix.from(face);
  const complementDd = DdMatrix.from(complement);
  const onFace = ddMultiply(ddMultiply(faceDd, gradientF, true), faceDd).toDouble();
  const cross = ddMultiply(ddMultiply(faceDd, gradientF, true), complementDd).toDouble();
  const offFace = ddMultiply(ddMultiply(complementDd, gradientF, true), complementDd).toDouble();
  // Each block: the pulled-back error, the factor's relative error on the block itself, and the rounding to double.
  const absolute = Math.abs(factor) * gradientError;
  const blockError = (block: ComplexMatrix) => absolute + (relativeQ + 2 * UNIT_ROUNDOFF) * frobeniusNorm(block);
  const value = coefficient * Math.log2(quasiEntropy);
  return {
    value,
    constant: value - coefficient / Math.LN2,
    gradient: gradientF.toDouble(),
    face: onFace,
    cross,
    complement: offFace,
    errors: {
      face: Math.abs(factor) * faceError + (relativeQ + 2 * UNIT_ROUNDOFF) * frobeniusNorm(onFace),
      cross: blockError(cross),
      complement: blockError(offFace),
      // |δF| ≤ |c|·|δQ|/(Q ln 2) (log₂ Q moves by at most that for |δQ| ≤ Q/2), plus the logarithm's rounding.
      constant: (Math.abs(coefficient) * relativeQ) / Math.LN2 / (1 - Math.min(relativeQ, 0.5)) + 4 * UNIT_ROUNDOFF * (Math.abs(value) + Math.abs(coefficient)),
    },
  };
}

/** A double-double matrix times a double. */
function scaleDd(a: DdMatrix, s: number): DdMatrix {
  const zero = new DdMatrix(a.rows, a.cols);
  return ddAddScaled(zero, a, [0, s]);
}
