// Petz-up's and sandwiched-up's branch terms at a point lifted off an exposed face, in double-double (docs/faces.md,
// "Petz lifts in double-double"): both are Tr[(Y^s·X·Y^s)^ω], with Y = Z(X) or the fixed τ'. M = Y^s·X·Y^s has
// eigenvalues near μ·λ_min(Y)^{2s}, below a double eigensolver's absolute accuracy for the μ ≈ 1e-10 … 1e-12 the
// linearization loss needs on some faces (d4#14, d16#4, d64#3). An output rank deficient on its support leaves M with
// a kernel, cut off in t^ω and t^{ω−1} (docs/faces.md, "Rényi lifts on an output rank deficient on its support").
import { columns, frobeniusNorm, hermitianPart, multiply, type ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import {
  DdMatrix,
  ddAddScaled,
  ddDaleckiiKrein,
  ddHermitianEigen,
  ddMultiply,
  ddScalarIdentity,
  ddSpectral,
  ddTrace,
} from '../linear-algebra/double-double-matrix.js';
import { dividedDifferences, powerFunction } from '../linear-algebra/matrix-functions.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { sandwichedOrder } from '../objectives/objective.js';
import {
  blockDiagonal,
  blockSpectrum,
  DD_STEP,
  ETA,
  keyBlock,
  pinchedSpectrum,
  rounded,
  roundedEigen,
  scaleDd,
  traceBranch,
  type BranchLift,
  type BlockSpectrum,
} from './double-double-lift.js';
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
  if (isKeyless(support)) return traceBranch(x, formingError);
  const t = sandwichedProduct(support, x, formingError, maps, 1 / alpha, pinchedSpectrum(support, x, formingError));
  return {
    term: t.quasiEntropy,
    termError: t.quasiEntropyError,
    gradient: ddAddScaled(t.direct, blockDiagonal(t.referenceBlocks, support.dimension), [0, 1]),
    gradientError: t.directError + t.referenceError,
    faceError: t.directFace + t.referenceFace,
  };
}

/** Both terms of ∇ Tr[(Y^s·X·Y^s)^ω] with Y's spectrum given: Petz-up's Y = Z(X), sandwiched-up's τ'. */
export interface SandwichedProduct {
  quasiEntropy: number;
  quasiEntropyError: number;
  /** ∇_X = Y^s·W·Y^s with its error (Frobenius) and its face block's error (through the maps K_jP̂). */
  direct: DdMatrix;
  directError: number;
  directFace: number;
  /** ∇_Y = D(t^s)(Y)[H] block by block, its error, and the error of its pull-back to the face block (`gradedPullBack`). */
  referenceBlocks: DdMatrix[];
  referenceError: number;
  referenceFace: number;
}

export function sandwichedProduct(
  support: BranchSupport,
  x: DdMatrix,
  formingError: number,
  maps: ComplexMatrix[],
  omega: number,
  reference: BlockSpectrum,
): SandwichedProduct {
  const s = (1 - omega) / (2 * omega);
  const p = omega - 1;
  const m = support.dimension;
  const { blockOf, eigen: blocks, values: mus, error: errorY, lowest: lowY, defect: defectY } = reference;
  if (!(lowY > 0)) throw new RangeError('lift: the reference is not positive definite to its error');
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
  // An output rank deficient on its support: M has exactly `kernel` zero eigenvalues (outputKernel), which the computed
  // M keeps within its error of 0; t^ω and t^{ω−1} are taken as 0 there (M^ω's and the pseudo-inverse power's values).
  const kernel = outputKernel(support);
  const kernelRadius = (1 + congruence) ** 2 * additive;
  for (let i = 0; i < kernel; i++) {
    if (!(Math.abs(nu[i]) <= kernelRadius)) throw new RangeError('lift: M has more nonzero eigenvalues than the output rank allows');
  }
  const lowM = nu[kernel] / (1 + congruence) ** 2 - additive;
  if (!(lowM > (kernel > 0 ? 10 * kernelRadius : 0))) throw new RangeError('petz-up lift: M is not positive definite to its error');
  // Across the kernel (|b| ≤ ε) and the rest (a ≥ 10ε), the cut-off g (t^ω or ω·t^{ω−1} off the kernel, 0 on it) has
  // |g^[1](a, b)| ≤ g(a)/(a − ε) ≤ (10/9)·g(a)/a, and for a congruence |g^[1]|·(|a| + |b|) ≤ (11/9)·g(a) (derived): the
  // factors the slopes and the congruence bounds gain where a kernel is cut off.
  const across = kernel > 0 ? 10 / 9 : 1;
  const acrossCongruence = kernel > 0 ? 11 / 9 : 1;
  const highM = nu[nu.length - 1] * (1 + congruence) ** 2 + additive;
  const defectM = eigenM.residual / Math.max(mMatrix.frobeniusNorm(), Number.MIN_VALUE);
  const cut = (f: (t: number) => number) => Array.from(nu, (t, i) => (i < kernel ? 0 : f(t)));
  const power = ddSpectral(eigenM.vectors, cut((t) => t ** omega));
  const weight = ddSpectral(eigenM.vectors, cut((t) => omega * t ** p));
  let quasiEntropy = 0;
  for (let i = kernel; i < nu.length; i++) quasiEntropy += nu[i] ** omega;
  const powerNorm = power.frobeniusNorm();
  const weightOperator = omega * lowM ** p;
  const weightNorm = weight.frobeniusNorm();
  const powerError =
    across * omega * lowM ** p * additive + 2 * acrossCongruence * highM ** omega * congruence + (ETA + 2 * defectM) * powerNorm;
  const weightError =
    (kernel > 0 ? Math.max(Math.abs(p), across) : Math.abs(p)) * omega * lowM ** (p - 1) * additive +
    2 * acrossCongruence * omega * lowM ** p * congruence +
    (ETA + 2 * defectM) * weightNorm;
  const direct = ddMultiply(ddMultiply(root, weight), root);
  const product = ddMultiply(inverseRoot, power);
  const argument = ddAddScaled(product, ddMultiply(power, inverseRoot), [0, 1]);
  const h = scaleDd(argument, omega);
  const hNorm = h.frobeniusNorm();
  const hError = 2 * omega * (inverseShift * powerNorm + lowY ** -s * powerError) + DD_STEP * 16 * m * hNorm;
  const divided = powerFunction(s);
  const referenceBlocks = blocks.map((e, b) => {
    const size = support.blockSizes[b];
    const gamma = dividedDifferences(mus[b], divided.value, divided.derivative, divided.difference);
    return ddDaleckiiKrein(e.vectors, (i, j) => gamma[i * size + j], blockOf(h, b));
  });
  const directNorm = direct.frobeniusNorm();
  const pinchedNorm = Math.sqrt(referenceBlocks.reduce((sum, b) => sum + b.frobeniusNorm() ** 2, 0));
  const rootError = ETA * rootNorm + rootShift;
  const directArithmetic = DD_STEP * 16 * m * directNorm;
  const referenceArithmetic = DD_STEP * 16 * m * pinchedNorm + 4 * defectY * pinchedNorm;
  const scaleM = BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF;
  // The face maps seen through Y^s, for M's clusters: rounded to double, so each row carries the product's rounding.
  const rootDouble = root.toDouble();
  const seen = maps.map((a) => multiply(rootDouble, a));
  const seenSlack = scaleM * Math.sqrt(m) * (1 + rootOperator) * Math.max(...maps.map(frobeniusNorm));
  // M's clusters without its kernel. The maps N_j = Y^s·K_jP̂ (Y^s the double-double matrix used) lie in the range of
  // M₀ = Y^s·X·Y^s for the exact X, which the computed M matches to `additive`; a unit u of the computed kernel has
  // ‖M₀u‖ ≤ ε + additive, so its part on that range is at most (ε + additive)/λ_min⁺(M₀) and ‖U₀†N_j‖ ≤ θ·‖N_j‖ (derived).
  // The E entries between the kernel and the rest reach the face block only through those rows: the cross term.
  const mEigen = withoutKernel(roundedEigen(eigenM), kernel);
  let kernelCross = 0;
  if (kernel > 0) {
    const offKernel = (kernelRadius + additive) / lowM + 2 * defectM;
    const kernelRows = seen.reduce((sum, a) => {
      const norm = frobeniusNorm(a) + seenSlack * Math.sqrt(m);
      return sum + norm * (offKernel * norm + seenSlack * Math.sqrt(kernel));
    }, 0);
    kernelCross = 2 * omega * lowM ** p * ((across * additive) / lowM + 2 * acrossCongruence * congruence) * kernelRows;
  }
  const directFace =
    omega * clusterCharge(mEigen, seen, powerDividedDifference(p), additive, false, seenSlack) +
    omega * clusterCharge(mEigen, seen, (a, b) => Math.min(a, b) ** p, 2 * congruence, true, seenSlack) +
    kernelCross +
    (ETA + 2 * defectM) * weightOperator * pulledBackUnit(seen, scaleM) +
    2 * rootError * weightOperator * rootOperator * pulledBackUnit(maps, scaleM);
  return {
    quasiEntropy,
    quasiEntropyError:
      Math.sqrt(m) * omega * lowM ** p * additive + ((1 + congruence) ** (2 * omega) - 1 + ETA) * quasiEntropy + DD_STEP * m * powerNorm,
    direct,
    directError: 2 * rootError * weightOperator * rootOperator + rootOperator ** 2 * weightError + ETA * directNorm + directArithmetic,
    directFace,
    referenceBlocks,
    referenceError:
      s * lowY ** (s - 1) * hError + s * (1 - s) * lowY ** (s - 2) * errorY * hNorm + ETA * pinchedNorm + referenceArithmetic,
    referenceFace:
      gradedPullBack(blocks.map(roundedEigen), support, maps, s, hError, hNorm, errorY, scaleM) +
      pulledBackUnit(maps, scaleM) * (ETA * pinchedNorm + referenceArithmetic),
  };
}

/**
 * Sandwiched-up at a fixed τ' (the joint linearization of docs/math.md §5): Q = Tr[(τ^s·X·τ^s)^β], β = α/(2α − 1),
 * the same two terms as Petz-up with Y = τ', but ∇_τQ stays on τ's blocks (its smallest eigenvalue enters the bound)
 * instead of being pulled back into ∇_X. τ' is given in doubles, so its blocks are exact; only their
 * eigendecompositions err. A branch without key keeps τ's scalar weight t: Q = t^{1−β}·(Tr X)^β.
 */
export function sandwichedBranch(
  support: BranchSupport,
  x: DdMatrix,
  formingError: number,
  maps: ComplexMatrix[],
  alpha: number,
  reference?: ComplexMatrix[],
): BranchLift {
  if (!reference) throw new Error('sandwiched-up lift: τ\' is needed');
  const beta = sandwichedOrder(alpha);
  const m = support.dimension;
  if (isKeyless(support)) {
    const t = reference[0].re[0];
    const trace = ddTrace(x);
    const traceError = formingError * Math.sqrt(m);
    const low = trace - traceError;
    if (!(t > 0 && low > 0)) throw new RangeError('sandwiched-up lift: a branch without key has no weight');
    const quasiEntropy = t ** (1 - beta) * trace ** beta;
    const slope = beta * t ** (1 - beta) * trace ** (beta - 1);
    const gradient = ddScalarIdentity(m, slope);
    const referenceGradient = new DdMatrix(1, 1);
    referenceGradient.reHigh[0] = (1 - beta) * t ** -beta * trace ** beta;
    return {
      term: quasiEntropy,
      termError: ETA * quasiEntropy + beta * t ** (1 - beta) * low ** (beta - 1) * traceError,
      gradient,
      // The slope's ETA and its move with Tr X (t^{β−1} is convex and decreasing: its slope is largest at the low end).
      gradientError: Math.sqrt(m) * (ETA * slope + beta * (1 - beta) * t ** (1 - beta) * low ** (beta - 2) * traceError),
      faceError: pulledBackUnit(maps, BACKWARD_ERROR_CONSTANT * m * UNIT_ROUNDOFF) * (ETA * slope + beta * (1 - beta) * t ** (1 - beta) * low ** (beta - 2) * traceError),
      reference: {
        blocks: [referenceGradient],
        error: ETA * referenceGradient.reHigh[0] + (1 - beta) * beta * t ** -beta * low ** (beta - 1) * traceError,
      },
    };
  }
  const blockOf = keyBlock(support);
  // τ' as the objective reads it: each block's Hermitian part (exactly Hermitian in doubles), so its residual is Jacobi's.
  const spectrum = blockSpectrum(blockOf, reference.map((block) => DdMatrix.from(hermitianPart(block))), 0);
  const product = sandwichedProduct(support, x, formingError, maps, beta, spectrum);
  return {
    term: product.quasiEntropy,
    termError: product.quasiEntropyError,
    gradient: product.direct,
    gradientError: product.directError,
    faceError: product.directFace,
    reference: { blocks: product.referenceBlocks, error: product.referenceError },
  };
}

/**
 * How many zero eigenvalues X_c has on its support at every full-rank point: m − r for an output range of dimension r
 * (`outputRange`), provided the Kraus operators' shapes prove rank X_c ≤ r (r = Σ_j columns of K_j); otherwise the
 * rank rests on a numerical decision, and the lift refuses.
 */
export function outputKernel(support: BranchSupport): number {
  if (!support.outputRange) return 0;
  if (!rankProvedByShapes(support)) throw new RangeError('lift: the output range is not proved by the Kraus operators\' shapes');
  return support.dimension - support.outputRange.cols;
}

/** Whether the output range's dimension is Σ_j (columns of K_j), an upper bound on rank X_c at every point. */
export function rankProvedByShapes(support: BranchSupport): boolean {
  const range = support.outputRange;
  return range === null || support.krausOperators.reduce((sum, k) => sum + k.cols, 0) === range.cols;
}

/** The eigenpairs from `kernel` on (the kernel's columns dropped). */
function withoutKernel(eigen: { values: Float64Array; vectors: ComplexMatrix }, kernel: number): { values: Float64Array; vectors: ComplexMatrix } {
  if (kernel === 0) return eigen;
  const n = eigen.vectors.rows;
  return { values: eigen.values.slice(kernel), vectors: columns(eigen.vectors, kernel, n) };
}
