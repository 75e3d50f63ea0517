// von Neumann's branch term at a point lifted off an exposed face, in double-double (docs/faces.md, "von Neumann
// lifts in double-double"): where the face state is itself nearly rank deficient inside the face (d64#4), the outputs'
// small eigenvalues lie in directions the face block sees, and a double eigensolver's error there costs more than the gap.
import { frobeniusNorm, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import {
  DdMatrix,
  ddAddScaled,
  ddHermitianEigen,
  ddMultiply,
  ddScalarIdentity,
  ddSpectral,
  ddTrace,
} from '../linear-algebra/double-double-matrix.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { blockDiagonal, DD_STEP, ETA, pinchedSpectrum, rounded, scaleDd, type BranchLift } from './double-double-lift.js';

/**
 * The branch's term of F, D(X‖Z(X))/ln 2 − f·Tr X, and its gradient (ln X − ln Z(X))/ln 2 − f·1 (docs/math.md §3), the
 * logarithms from double-double eigendecompositions. No Daleckii–Krein form is needed, so the errors are first order
 * in the decompositions' residuals (Frobenius):
 * - ln of the rounded eigenvalues errs by ETA·(1 + |ln λ|) each;
 * - each decomposition is exact for A + E (‖E‖ within its residual and the forming error), and ln is Lipschitz with
 *   constant 1/λ_low on the segment (|ln^[1]| ≤ 1/min), so ln moves by ‖E‖/λ_low; U's defect costs 2·defect·‖ln‖;
 * - on a support where X has lower rank (`outputRange` R), the compressed R†XR is W†·A·W for the exact range's
 *   coordinates A and W = R_t†R (`rangeCongruence`); the logarithm's first-order change under that congruence is
 *   bounded entrywise by |H_ab|·(2 + ln(λ_max/λ_min)) with ‖H‖_F ≤ ‖W†W − 1‖_F, and W·(·)·W† costs 2‖H‖ + ‖H‖² more.
 * The face block takes the whole gradient error (the pull-back has norm at most 1).
 */
export function vonNeumannBranch(support: BranchSupport, x: DdMatrix, formingError: number): BranchLift {
  const m = support.dimension;
  const score = support.score;
  const trace = ddTrace(x);
  const traceError = formingError * Math.sqrt(m) + DD_STEP * m * Math.abs(trace);
  const scoreGradient = ddScalarIdentity(m, -score);
  // No key: D(X‖X) = 0 exactly, only the score's linear term.
  if (isKeyless(support)) {
    return { term: -score * trace, termError: Math.abs(score) * traceError, gradient: scoreGradient, gradientError: 0, faceError: 0 };
  }
  const range = support.outputRange;
  const congruence = range ? cachedRangeCongruence(support, range) : 0;
  if (!(congruence < 0.1)) throw new RangeError('von Neumann lift: the output range basis is too far from the exact range');
  const rangeDd = range ? DdMatrix.from(range) : null;
  const compressed = rangeDd ? ddMultiply(ddMultiply(rangeDd, x, true), rangeDd) : x;
  const r = compressed.rows;
  // ‖R‖_F² (1 without a range): the products R†·X·R and R·L·R† round within a few u_dd of |R|·|·|·|R|.
  const rangeWeight = range ? frobeniusNorm(range) ** 2 : 1;
  // Compressing with R: ‖R‖² ≤ 1 + δ times X's forming error, plus the two products' rounding.
  const compressError = rangeDd ? (1 + congruence) * formingError + DD_STEP * 8 * (m + r) * rangeWeight * x.frobeniusNorm() : formingError;
  const eigenX = ddHermitianEigen(compressed);
  const lambda = rounded(eigenX);
  const pinched = pinchedSpectrum(support, x, formingError);
  const errorX = eigenX.residual + compressError;
  const lowX = lambda[0] - errorX;
  if (!(lowX > 0 && pinched.lowest > 0)) throw new RangeError('von Neumann lift: a branch output is not positive definite to its error');
  const logState = ddSpectral(eigenX.vectors, Array.from(lambda, Math.log));
  const logPinched = blockDiagonal(
    pinched.eigen.map((e, b) => ddSpectral(e.vectors, Array.from(pinched.values[b], Math.log))),
    m,
  );
  const expanded = rangeDd ? ddMultiply(ddMultiply(rangeDd, logState), rangeDd, false, true) : logState;
  const nats = ddAddScaled(expanded, logPinched, [0, -1]);
  const stateNorm = logState.frobeniusNorm();
  const pinchedNorm = logPinched.frobeniusNorm();
  const defectX = eigenX.residual / Math.max(compressed.frobeniusNorm(), Number.MIN_VALUE);
  const logValues = (values: ArrayLike<number>) => Math.sqrt(Array.from(values).reduce((s, v) => s + (1 + Math.abs(Math.log(v))) ** 2, 0));
  // ln(λ_max/λ_min) of the exact range's A, whose eigenvalues are those of R†XR within a factor 1 ± δ (Ostrowski).
  const spread = 2 + Math.log((lambda[r - 1] * (1 + congruence)) / (lowX * (1 - congruence)));
  const gradientNats =
    ETA * (logValues(lambda) + pinched.values.reduce((s, v) => s + logValues(v), 0)) +
    errorX / lowX +
    pinched.error / pinched.lowest +
    2 * (defectX * stateNorm + pinched.defect * pinchedNorm) +
    congruence * spread +
    (2 * congruence + congruence ** 2) * stateNorm +
    DD_STEP * 8 * (m + r) * (rangeWeight * stateNorm + pinchedNorm);
  const entropy = (values: ArrayLike<number>) => Array.from(values).reduce((s, v) => s + v * Math.log(v), 0);
  const relative = (nats: number) => nats / Math.LN2;
  const stateEntropy = entropy(lambda);
  const pinchedEntropies = pinched.values.map(entropy);
  const value = relative(stateEntropy - pinchedEntropies.reduce((s, v) => s + v, 0)) - score * trace;
  // Each eigenvalue within its decomposition's error (Weyl) moves λ·ln λ by |1 + ln λ| per unit, and by 2δ relatively
  // under the range congruence; the products' ETA.
  const valueError =
    relative(
      errorX * logValues(lambda) +
        2 * congruence * Array.from(lambda).reduce((s, v) => s + v * (1 + Math.abs(Math.log(v))), 0) +
        pinched.error * pinched.values.reduce((s, v) => s + logValues(v), 0) +
        ETA * (Math.abs(stateEntropy) + pinchedEntropies.reduce((s, v) => s + Math.abs(v), 0)),
    ) +
    Math.abs(score) * traceError;
  // 1/ln 2 taken in double: a relative u on the logarithms.
  const gradientError = relative(gradientNats) + UNIT_ROUNDOFF * relative(nats.frobeniusNorm());
  return {
    term: value,
    termError: valueError,
    gradient: ddAddScaled(scaleDd(nats, 1 / Math.LN2), scoreGradient, [0, 1]),
    gradientError,
    faceError: gradientError,
  };
}

/**
 * ‖W†W − 1‖_F for W = R_t†R, R_t an orthonormal basis of the exact range of M = Σ_j K_j·K_j† (the range of every
 * output at a full-rank point) and R the support's computed `outputRange` (derived): W†W = R†R − R†(1 − Π)R, and
 * (1 − Π)·M = 0 gives (1 − Π)·R·G = −(1 − Π)(M·R − R·G) for G = R†MR, so ‖(1 − Π)R‖_F ≤ ‖MR − RG‖_F / λ_min(G).
 * M's rank is r exactly when r = Σ_j rank K_j can be read off the Kraus operators' shapes (d64#4: one 65 × 64
 * operator); otherwise it is the support convention of docs/math.md §3, as for every other evaluation.
 */
export function rangeCongruence(support: BranchSupport, range: ComplexMatrix): number {
  const m = support.dimension;
  const r = range.cols;
  let identityOutput = new DdMatrix(m, m);
  for (const k of support.krausOperators) {
    const kd = DdMatrix.from(k);
    identityOutput = ddAddScaled(identityOutput, ddMultiply(kd, kd, false, true), [0, 1]);
  }
  const rd = DdMatrix.from(range);
  const mr = ddMultiply(identityOutput, rd);
  const gram = ddMultiply(rd, mr, true);
  const residual = ddAddScaled(mr, ddMultiply(rd, gram), [0, -1]);
  const gramDouble = gram.toDouble();
  const scaleR = BACKWARD_ERROR_CONSTANT * r * UNIT_ROUNDOFF;
  const gramLowest = eigvalsh(gramDouble)[0] - (scaleR + UNIT_ROUNDOFF) * frobeniusNorm(gramDouble);
  if (!(gramLowest > 0)) return Infinity;
  // M·R rounds within a few u_dd of ‖M‖_F‖R‖_F, R·G of ‖R‖_F·‖G‖_F ≤ ‖R‖_F³‖M‖_F.
  const rangeNorm = rd.frobeniusNorm();
  const rounding = DD_STEP * 8 * (m + r) * identityOutput.frobeniusNorm() * (rangeNorm + rangeNorm ** 3);
  const outside = (residual.frobeniusNorm() + rounding) / gramLowest;
  const isometry = ddAddScaled(ddMultiply(rd, rd, true), ddScalarIdentity(r, 1), [0, -1]);
  return isometry.frobeniusNorm() + DD_STEP * 8 * m * frobeniusNorm(range) ** 2 + outside ** 2;
}

/** `rangeCongruence` once per support: it depends on the problem alone (about 150 ms at d = 64), not on the point. */
const congruences = new WeakMap<BranchSupport, number>();

function cachedRangeCongruence(support: BranchSupport, range: ComplexMatrix): number {
  let value = congruences.get(support);
  if (value === undefined) {
    value = rangeCongruence(support, range);
    congruences.set(support, value);
  }
  return value;
}
