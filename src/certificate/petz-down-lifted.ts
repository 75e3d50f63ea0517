// Petz-down's branch term at a point lifted off an exposed face, in double-double (docs/faces.md, "Petz lifts in
// double-double"): its linearization loss falls only like μ^{2−α}, so the lift needs μ ≈ 1e-14, where the branch
// outputs' small eigenvalues lie below a double eigensolver's absolute accuracy.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { ddAddScaled, ddDaleckiiKrein, ddHermitianEigen, ddSpectral, ddTraceProduct, type DdMatrix } from '../linear-algebra/double-double-matrix.js';
import { dividedDifferences, powerFunction } from '../linear-algebra/matrix-functions.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { blockDiagonal, DD_STEP, ETA, pinchedSpectrum, rounded, roundedEigen, traceBranch, type BranchLift } from './double-double-lift.js';
import { gradedPullBack, pulledBackUnit } from './face-block-charge.js';

/**
 * Q = Tr[X^β·Y^{1−β}] (β = 2 − α, Y = Z(X)) and ∇_X Q = D(t^β)(X)[Y^{1−β}] + Z(D(t^{1−β})(Y)[X^β]) (docs/math.md §3),
 * eigendecompositions, products and the Daleckii–Krein forms in double-double; the powers and divided differences in
 * double from eigenvalues rounded to double, each within ETA of its exact value relative to itself. Errors (Frobenius):
 * - the eigendecompositions, exact for X + E_X and Y + E_Y with ‖E‖ within their a posteriori residuals (plus X's
 *   forming error): the powers move by f'(λ_low)·‖E‖ and by ETA of their norm, and each Daleckii–Krein map by
 *   2·max|f^[2]|·‖E‖·‖argument‖ (max|f^[2]| ≤ |f''|/2 at the lowest eigenvalue less ‖E‖) plus max|f^[1]| times its
 *   argument's error;
 * - the divided differences' own ETA by ETA·‖term‖; U's defect ‖U†U − 1‖ by 4 times it on every formed matrix;
 * - the face block graded through N_j = K_jP̂ (`gradedPullBack` with s = β at X and s = 1 − β at Y's blocks).
 */
export function petzDownBranch(support: BranchSupport, x: DdMatrix, formingError: number, maps: ComplexMatrix[], alpha: number): BranchLift {
  if (isKeyless(support)) return traceBranch(x, formingError);
  const beta = 2 - alpha;
  const m = support.dimension;
  const eigenX = ddHermitianEigen(x);
  const lambda = rounded(eigenX);
  const { blockOf, eigen: blocks, values: mus, error: errorY, lowest: lowY, defect: defectY } = pinchedSpectrum(support, x, formingError);
  const errorX = eigenX.residual + formingError;
  const lowX = lambda[0] - errorX;
  if (!(lowX > 0 && lowY > 0)) throw new RangeError('petz-down lift: a branch output is not positive definite to its error');
  const statePower = ddSpectral(eigenX.vectors, Array.from(lambda, (t) => t ** beta));
  const pinchedPower = blockDiagonal(
    blocks.map((e, b) => ddSpectral(e.vectors, Array.from(mus[b], (t) => t ** (1 - beta)))),
    m,
  );
  const stateDivided = powerFunction(beta);
  const pinchedDivided = powerFunction(1 - beta);
  const stateGamma = dividedDifferences(lambda, stateDivided.value, stateDivided.derivative, stateDivided.difference);
  const termA = ddDaleckiiKrein(eigenX.vectors, (i, j) => stateGamma[i * m + j], pinchedPower);
  const termB = blockDiagonal(
    blocks.map((e, b) => {
      const size = support.blockSizes[b];
      const gamma = dividedDifferences(mus[b], pinchedDivided.value, pinchedDivided.derivative, pinchedDivided.difference);
      return ddDaleckiiKrein(e.vectors, (i, j) => gamma[i * size + j], blockOf(statePower, b));
    }),
    m,
  );
  const q = ddTraceProduct(statePower, pinchedPower);
  const powerNorm = statePower.frobeniusNorm();
  const pinchedNorm = pinchedPower.frobeniusNorm();
  // U·f·U† with U unitary only to ‖U†U − 1‖ ≤ residual/‖A‖ (per matrix) errs by at most twice that times ‖f‖.
  const defect = eigenX.residual / Math.max(x.frobeniusNorm(), Number.MIN_VALUE) + defectY;
  const stateSlope = beta * lowX ** (beta - 1);
  const pinchedSlope = (1 - beta) * lowY ** -beta;
  const statePowerError = (ETA + 2 * defect) * powerNorm + stateSlope * errorX;
  const pinchedPowerError = (ETA + 2 * defect) * pinchedNorm + pinchedSlope * errorY;
  const stateCurvature = (beta * (1 - beta) * lowX ** (beta - 2)) / 2;
  const pinchedCurvature = (beta * (1 - beta) * lowY ** (-beta - 1)) / 2;
  const normA = termA.frobeniusNorm();
  const normB = termB.frobeniusNorm();
  const arithmetic = DD_STEP * 8 * m * (normA + normB) + 4 * defect * (normA + normB);
  const scaleM = BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF;
  const whole = { blockOffsets: [0], blockSizes: [m] } as unknown as BranchSupport;
  return {
    term: q[1] + q[0],
    termError: statePowerError * pinchedNorm + powerNorm * pinchedPowerError + DD_STEP * m * powerNorm * pinchedNorm,
    gradient: ddAddScaled(termA, termB, [0, 1]),
    gradientError:
      ETA * (normA + normB) +
      stateSlope * pinchedPowerError +
      pinchedSlope * statePowerError +
      2 * stateCurvature * errorX * pinchedNorm +
      2 * pinchedCurvature * errorY * powerNorm +
      arithmetic,
    faceError:
      gradedPullBack([roundedEigen(eigenX)], whole, maps, beta, pinchedPowerError, pinchedNorm, errorX, scaleM) +
      gradedPullBack(blocks.map(roundedEigen), support, maps, 1 - beta, statePowerError, powerNorm, errorY, scaleM) +
      pulledBackUnit(maps, scaleM) * (ETA * (normA + normB) + arithmetic),
  };
}
