// Petz-up's branch term at a point lifted off an exposed face, in double-double (docs/faces.md, "Petz lifts in
// double-double"): M = Y^s·X·Y^s has eigenvalues near μ·λ_min(Y)^{2s}, below a double eigensolver's absolute accuracy
// for the μ ≈ 1e-10 … 1e-12 the linearization loss needs on some faces (d4#14, d16#4).
import { frobeniusNorm, multiply, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import {
  ddAddScaled,
  ddDaleckiiKrein,
  ddHermitianEigen,
  ddMultiply,
  ddSpectral,
  type DdMatrix,
} from '../linear-algebra/double-double-matrix.js';
import { dividedDifferences, powerFunction } from '../linear-algebra/matrix-functions.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { BranchSupport } from '../objectives/branch-supports.js';
import { blockDiagonal, DD_STEP, ETA, pinchedSpectrum, rounded, roundedEigen, scaleDd, type BranchLift } from './double-double-lift.js';
import { clusterCharge, gradedPullBack, powerDividedDifference, pulledBackUnit } from './face-block-charge.js';

/**
 * Q = Tr M^ω with M = Y^s·X·Y^s, Y = Z(X), ω = 1/α, s = (1 − ω)/(2ω), and ∇_X Q = Y^s·W·Y^s + Z(D(t^s)(Y)[H]) with
 * W = ω·M^{ω−1} and H = X·Y^s·W + W·Y^s·X = ω·(Y^{−s}·M^ω + M^ω·Y^{−s}) (docs/math.md §3; H is formed from the
 * second expression, whose error goes through the concave M^ω instead of W's slope at M's smallest eigenvalue).
 * Errors (Frobenius unless said):
 * - Y's blocks: exact for Y + E_Y, ‖E_Y‖ within the sum of their residuals plus X's forming error; Y^{±s} move by
 *   s·λ_low^{±s−1}·‖E_Y‖ and, from the powers' ETA, by a congruence that commutes with Y^s;
 * - M as decomposed is exact for (1 + F)(M + A)(1 + F)† with ‖F‖_F ≤ ETA·√m (Y^s's values) and ‖A‖ within
 *   2Δ·‖X‖·‖Y^s‖ + Δ²‖X‖ + ‖Y^s‖²·(X's forming error) + the product's and the eigendecomposition's own, Δ Y^s's
 *   remaining error;
 * - M^ω moves by ω·ν_low^{ω−1}·‖A‖ + 2·ν_max^ω·‖F‖ (concave; |(t^ω)^[1](a, b)·b| ≤ max(a, b)^ω) + its values' ETA;
 *   W by |ω − 1|·ω·ν_low^{ω−2}·‖A‖ + 2ω·ν_low^{ω−1}·‖F‖ (|(t^p)^[1](a, b)·b| ≤ min(a, b)^p) + ETA;
 * - the face block of Y^s·W·Y^s by `clusterCharge` over M's clusters (maps Y^s·K_jP̂, additive and congruent), plus Y^s's
 *   error twice through ‖W‖·‖Y^s‖; that of Z(D(t^s)(Y)[H]) by `gradedPullBack`.
 */
export function petzUpBranch(support: BranchSupport, x: DdMatrix, formingError: number, maps: ComplexMatrix[], alpha: number): BranchLift {
  const omega = 1 / alpha;
  const s = (1 - omega) / (2 * omega);
  const p = omega - 1;
  const m = support.dimension;
  const { blockOf, eigen: blocks, values: mus, error: errorY, lowest: lowY, defect: defectY } = pinchedSpectrum(support, x, formingError);
  if (!(lowY > 0)) throw new RangeError('petz-up lift: a pinched output is not positive definite to its error');
  const root = blockDiagonal(blocks.map((e, b) => ddSpectral(e.vectors, Array.from(mus[b], (t) => t ** s))), m);
  const inverseRoot = blockDiagonal(blocks.map((e, b) => ddSpectral(e.vectors, Array.from(mus[b], (t) => t ** -s))), m);
  const highY = Math.max(...mus.map((v) => v[v.length - 1])) + errorY;
  const rootOperator = highY ** s;
  const rootNorm = root.frobeniusNorm();
  const inverseNorm = inverseRoot.frobeniusNorm();
  // Y^s's error beyond the congruence of its values: the eigendecomposition's and U's defect.
  const rootShift = s * lowY ** (s - 1) * errorY + 2 * defectY * rootNorm;
  const inverseShift = (ETA + 2 * defectY) * inverseNorm + s * lowY ** (-s - 1) * errorY;
  const xNorm = x.frobeniusNorm();
  const mMatrix = ddMultiply(ddMultiply(root, x), root);
  const eigenM = ddHermitianEigen(mMatrix);
  const nu = rounded(eigenM);
  const congruence = ETA * Math.sqrt(m);
  const additive =
    2 * rootShift * xNorm * rootOperator +
    rootShift ** 2 * xNorm +
    rootOperator ** 2 * formingError +
    DD_STEP * 16 * m * rootNorm ** 2 * xNorm +
    eigenM.residual * (1 + 4 * ETA);
  const lowM = nu[0] / (1 + congruence) ** 2 - additive;
  if (!(lowM > 0)) throw new RangeError('petz-up lift: M is not positive definite to its error');
  const highM = nu[nu.length - 1] * (1 + congruence) ** 2 + additive;
  const defectM = eigenM.residual / Math.max(mMatrix.frobeniusNorm(), Number.MIN_VALUE);
  const power = ddSpectral(eigenM.vectors, Array.from(nu, (t) => t ** omega));
  const weight = ddSpectral(eigenM.vectors, Array.from(nu, (t) => omega * t ** p));
  let quasiEntropy = 0;
  for (const t of nu) quasiEntropy += t ** omega;
  const powerNorm = power.frobeniusNorm();
  const weightOperator = omega * lowM ** p;
  const weightNorm = weight.frobeniusNorm();
  const powerError = omega * lowM ** p * additive + 2 * highM ** omega * congruence + (ETA + 2 * defectM) * powerNorm;
  const weightError = Math.abs(p) * omega * lowM ** (p - 1) * additive + 2 * omega * lowM ** p * congruence + (ETA + 2 * defectM) * weightNorm;
  const direct = ddMultiply(ddMultiply(root, weight), root);
  const product = ddMultiply(inverseRoot, power);
  const argument = ddAddScaled(product, ddMultiply(power, inverseRoot), [0, 1]);
  const h = scaleDd(argument, omega);
  const hNorm = h.frobeniusNorm();
  const hError = 2 * omega * (inverseShift * powerNorm + lowY ** -s * powerError) + DD_STEP * 16 * m * hNorm;
  const divided = powerFunction(s);
  const pinchedTerm = blockDiagonal(
    blocks.map((e, b) => {
      const size = support.blockSizes[b];
      const gamma = dividedDifferences(mus[b], divided.value, divided.derivative, divided.difference);
      return ddDaleckiiKrein(e.vectors, (i, j) => gamma[i * size + j], blockOf(h, b));
    }),
    m,
  );
  const directNorm = direct.frobeniusNorm();
  const pinchedNorm = pinchedTerm.frobeniusNorm();
  const rootError = ETA * rootNorm + rootShift;
  const arithmetic = DD_STEP * 16 * m * (directNorm + pinchedNorm) + 4 * defectY * pinchedNorm;
  const scaleM = BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF;
  // The face maps seen through Y^s, for M's clusters: rounded to double, so each row carries the product's rounding.
  const rootDouble = root.toDouble();
  const seen = maps.map((a) => multiply(rootDouble, a));
  const seenSlack = scaleM * Math.sqrt(m) * (1 + rootOperator) * Math.max(...maps.map(frobeniusNorm));
  const mEigen = roundedEigen(eigenM);
  const directFace =
    omega * clusterCharge(mEigen, seen, powerDividedDifference(p), additive, false, seenSlack) +
    omega * clusterCharge(mEigen, seen, (a, b) => Math.min(a, b) ** p, 2 * congruence, true, seenSlack) +
    (ETA + 2 * defectM) * weightOperator * pulledBackUnit(seen, scaleM) +
    2 * rootError * weightOperator * rootOperator * pulledBackUnit(maps, scaleM);
  return {
    quasiEntropy,
    quasiEntropyError:
      Math.sqrt(m) * omega * lowM ** p * additive + ((1 + congruence) ** (2 * omega) - 1 + ETA) * quasiEntropy + DD_STEP * m * powerNorm,
    gradient: ddAddScaled(direct, pinchedTerm, [0, 1]),
    gradientError:
      2 * rootError * weightOperator * rootOperator +
      rootOperator ** 2 * weightError +
      s * lowY ** (s - 1) * hError +
      s * (1 - s) * lowY ** (s - 2) * errorY * hNorm +
      ETA * (directNorm + pinchedNorm) +
      arithmetic,
    faceError:
      directFace +
      gradedPullBack(blocks.map(roundedEigen), support, maps, s, hError, hNorm, errorY, scaleM) +
      pulledBackUnit(maps, scaleM) * (ETA * pinchedNorm + arithmetic),
  };
}
