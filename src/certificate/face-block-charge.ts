// What the branch outputs' rounding does to the face block of ∇F at a point lifted off an exposed face (docs/faces.md,
// "The lifted linearization bound"): Daleckii–Krein over the clusters of large and small eigenvalues of the matrix
// whose logarithm or negative power is taken. Used by the lifted face bound and, for von Neumann, by the margin's
// split over the smallest eigenvectors of S (bound.ts).
import {
  ComplexMatrix,
  addScaledInPlace,
  conjugate,
  conjugateAdjoint,
  directSum,
  frobeniusNorm,
  hermitianPart,
  multiply,
  multiplyAdjointLeft,
  rows,
  scale,
} from '../linear-algebra/complex-matrix.js';
import { pinchedBlocks } from '../objectives/spectral-blocks.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { isKeyless, type BranchSupport } from '../objectives/branch-supports.js';
import { branchWeight, sandwichedOrder, type Objective, type ReferenceBlocks } from '../objectives/index.js';

/**
 * The branch outputs' share of the error of the face block of ∇F (von Neumann). A backward error Δ of X = X_c's
 * eigendecomposition (‖Δ‖_F ≤ scale·size_c, as in the curvature charge of docs/convergence.md) moves ln X by the
 * Daleckii–Krein map U(Γ ∘ U†ΔU)U†, and the face block by Σ_j A_j†(Γ ∘ U†ΔU)A_j with A_j = U†K_jP̂.
 */
export function vonNeumannFaceCharge(objective: Objective, rho: ComplexMatrix, faceBasis: ComplexMatrix, scaleN: number): number {
  const rhoNorm = frobeniusNorm(rho);
  const outputs = objective.branchOutputs(rho);
  let total = 0;
  objective.supports.forEach((support, c) => {
    if (isKeyless(support)) return;
    const { eigen, maps } = outputOnRange(support, outputs[c], support.krausOperators.map((k) => multiply(k, faceBasis)));
    total += clusterCharge(eigen, maps, logDividedDifference, scaleN * outputSize(support, outputs[c], rhoNorm)) / Math.LN2;
  });
  return total;
}

/** X_c's eigendecomposition on its range (the support when it has full rank there) and the maps K_j·W seen there. */
function outputOnRange(
  support: BranchSupport,
  output: ComplexMatrix,
  images: readonly ComplexMatrix[],
): { eigen: { values: Float64Array; vectors: ComplexMatrix }; maps: ComplexMatrix[] } {
  const range = support.outputRange;
  return {
    eigen: eigh(hermitianPart(range ? conjugateAdjoint(range, output) : output)),
    maps: range ? images.map((a) => multiplyAdjointLeft(range, a)) : [...images],
  };
}

/**
 * ‖X_c‖_F + ‖ρ‖_F·Σ_j ‖K_j‖_F²: the outputs' perturbation that one rounding of ρ and of X_c's eigendecomposition
 * stands for, in units of the backward-error scale (as the curvature charge's `sizes`, objective.ts).
 */
function outputSize(support: BranchSupport, output: ComplexMatrix, rhoNorm: number): number {
  return frobeniusNorm(output) + rhoNorm * support.krausOperators.reduce((w, k) => w + frobeniusNorm(k) ** 2, 0);
}

/** |ln^[1](a, b)|, decreasing in both arguments. */
function logDividedDifference(a: number, b: number): number {
  return a === b ? 1 / a : Math.log(a / b) / (a - b);
}

/**
 * Bound on ‖Σ_j N_j†·Df(M)[E]·N_j‖ over Hermitian E with ‖E‖_F ≤ `error` (first order; Daleckii–Krein), for a scalar f
 * whose divided difference |f^[1]| decreases in both arguments (ln, and t^p with −1 < p < 0). For a congruence
 * E = F·M + M·F† (‖F‖_F ≤ error/2) pass `divided` = min(a, b)^p, which bounds |f^[1](a, b)·b| for t^p. In M's eigenbasis U,
 * split the spectrum into the large eigenvalues B and the small ones S: |f^[1]| ≤ γ_BB = |f^[1](λ_B, λ_B)| on B×B,
 * γ_BS = |f^[1](λ_B, λ_0)| across, γ_SS = |f^[1](λ_0, λ_0)| on S×S (λ_B the smallest of B, λ_0 of all), and
 * ‖Γ ∘ Ẽ‖_F ≤ max|Γ|·‖E‖_F on each block, so the sum is at most error·Σ_j (b_j·γ_BB + 2√(b_j s_j)·γ_BS + s_j·γ_SS)
 * with b_j, s_j the squared Frobenius norms of U†N_j's rows in B and in S. The split giving the least is taken.
 * Infinity when the error is not well below λ_0 (first order would not hold).
 */
export function clusterCharge(
  eigen: { values: Float64Array; vectors: ComplexMatrix },
  maps: readonly ComplexMatrix[],
  divided: (a: number, b: number) => number,
  error: number,
  /** The error is a congruence (1 + F)·M·(1 + F)† with ‖F‖ ≤ error instead of an additive one. */
  relative = false,
  /** Each row norm of U†N_j may be this much larger than computed (rounding of U, of N_j and of the product). */
  slack = 0,
): number {
  const rows = maps.map((map) => {
    const squares = rowSquares(multiplyAdjointLeft(eigen.vectors, map));
    return slack > 0 ? Float64Array.from(squares, (r) => (Math.sqrt(r) + slack) ** 2) : squares;
  });
  return clusterChargeOfRows(eigen.values, rows, rows, divided, error, relative);
}

/** Squared Frobenius norms of a matrix's rows. */
function rowSquares(a: ComplexMatrix): Float64Array {
  const out = new Float64Array(a.rows);
  for (let r = 0; r < a.rows; r++) {
    for (let c = 0; c < a.cols; c++) out[r] += a.re[r * a.cols + c] ** 2 + a.im[r * a.cols + c] ** 2;
  }
  return out;
}

/** Prefix sums of squared row norms: entry i holds the share of rows 0 … i − 1 (the small cluster below split i). */
function prefixSums(rows: Float64Array): Float64Array {
  const sums = new Float64Array(rows.length + 1);
  rows.forEach((v, i) => (sums[i + 1] = sums[i] + v));
  return sums;
}

/**
 * `clusterCharge` from M's eigenvalues (ascending) and the squared row norms of each U†L_j and U†R_j: the bound on
 * ‖Σ_j L_j†·Df(M)[E]·R_j‖, Σ_j [l_B r_B·γ_BB + (l_B r_S + l_S r_B)·γ_BS + l_S r_S·γ_SS] with l, r the Frobenius
 * norms of the rows in the large (B) and small (S) clusters. With L_j = R_j = N_j this is the diagonal block's
 * error·Σ_j (b_j·γ_BB + 2√(b_j s_j)·γ_BS + s_j·γ_SS); the cross block of a split basis pairs different maps.
 */
function clusterChargeOfRows(
  eigenvalues: Float64Array,
  left: readonly Float64Array[],
  right: readonly Float64Array[],
  divided: (a: number, b: number) => number,
  error: number,
  relative: boolean,
): number {
  if (!(relative ? error < 0.1 : eigenvalues[0] > 10 * error)) return Infinity;
  // The exact matrix's eigenvalues lie within the error of the computed ones (Weyl; Ostrowski for a congruence), and
  // the bounds decrease in both arguments, so lower them.
  const values = Float64Array.from(eigenvalues, (v) => (relative ? v * (1 - error) ** 2 : v - error));
  const leftBelow = left.map(prefixSums);
  const rightBelow = right === left ? leftBelow : right.map(prefixSums);
  let best = Infinity;
  for (let split = 0; split < values.length; split++) {
    const large = values[split];
    const within = divided(large, large);
    const across = split === 0 ? 0 : divided(large, values[0]);
    const small = split === 0 ? 0 : divided(values[0], values[0]);
    let sum = 0;
    leftBelow.forEach((l, j) => {
      const r = rightBelow[j];
      const lS = Math.sqrt(l[split]);
      const lB = Math.sqrt(Math.max(0, l[l.length - 1] - l[split]));
      const rS = Math.sqrt(r[split]);
      const rB = Math.sqrt(Math.max(0, r[r.length - 1] - r[split]));
      sum += lB * rB * within + (lB * rS + lS * rB) * across + lS * rS * small;
    });
    best = Math.min(best, sum);
  }
  return error * best;
}

/** Cluster charges of the blocks of ∇F over a split basis [W_k | W_k⊥], for every k (entry 0 unused). */
export interface LeadingCharges {
  /** Bounds on the error of W_k†∇F·W_k. */
  within: Float64Array;
  /** Bounds on the error of W_k⊥†∇F·W_k (the cross block). */
  cross: Float64Array;
}

/**
 * The error of the blocks of ∇F over [W_k | W_k⊥] for every k (W_k the first k columns of `basis`), von Neumann:
 * `vonNeumannFaceCharge`'s Daleckii–Krein cluster bound for each output X_c and, with the same error size, for each
 * of its pinched blocks Z_b(X_c) (∇F holds −ln Z(X_c) too; its maps are the block's rows of K_jW). The cross block
 * pairs maps L_j = U†K_jW_k⊥ with R_j = U†K_jW_k. One eigendecomposition per matrix serves every k. Used by the margin's split over the smallest eigenvectors of S (bound.ts, docs/convergence.md).
 */
export function vonNeumannLeadingCharges(objective: Objective, rho: ComplexMatrix, basis: ComplexMatrix, scaleN: number): LeadingCharges {
  const within = new Float64Array(basis.cols + 1);
  const cross = new Float64Array(basis.cols + 1);
  const rhoNorm = frobeniusNorm(rho);
  const outputs = objective.branchOutputs(rho);
  objective.supports.forEach((support, c) => {
    if (isKeyless(support)) return;
    const output = outputs[c];
    const error = scaleN * outputSize(support, output, rhoNorm);
    const images = support.krausOperators.map((k) => multiply(k, basis));
    const matrices = [
      outputOnRange(support, output, images),
      ...pinchedBlocks(output, support.blockSizes, support.blockOffsets).map((block, b) => ({
        eigen: eigh(hermitianPart(block)),
        maps: images.map((a) => rows(a, support.blockOffsets[b], support.blockOffsets[b] + support.blockSizes[b])),
      })),
    ];
    for (const { eigen, maps } of matrices) {
      const rotated = maps.map((map) => multiplyAdjointLeft(eigen.vectors, map));
      const totals = rotated.map(rowSquares);
      const rows = rotated.map((a) => new Float64Array(a.rows));
      for (let k = 1; k <= basis.cols; k++) {
        rotated.forEach((a, j) => {
          for (let r = 0; r < a.rows; r++) rows[j][r] += a.re[r * a.cols + k - 1] ** 2 + a.im[r * a.cols + k - 1] ** 2;
        });
        within[k] += clusterChargeOfRows(eigen.values, rows, rows, logDividedDifference, error, false) / Math.LN2;
        const rest = rows.map((r, j) => Float64Array.from(r, (v, i) => Math.max(0, totals[j][i] - v)));
        cross[k] += clusterChargeOfRows(eigen.values, rest, rows, logDividedDifference, error, false) / Math.LN2;
      }
    }
  });
  return { within, cross };
}

/** |(t^p)^[1](a, b)| for −1 < p < 0: convex and decreasing, so it decreases in both arguments. */
export function powerDividedDifference(p: number): (a: number, b: number) => number {
  return (a, b) => {
    const [low, high] = a < b ? [a, b] : [b, a];
    // Close arguments: the derivative at the smaller one bounds the quotient and avoids its cancellation.
    return high > low * (1 + 1e-6) ? (low ** p - high ** p) / (high - low) : -p * low ** (p - 1);
  };
}

/** The shares of the lifted bound's margin that M_c = Y_c^s·X̂_c·Y_c^s carries (Petz-up and sandwiched-up). */
export interface QuasiEntropyCharges {
  /** On the face block of the matrix paired with σ (∇_ρF, or G = ∇_ρF − a·1 for sandwiched-up). */
  face: number;
  /** Sandwiched-up: on each λ_min of ∇_τF, formed from X̂τ^sW + Wτ^sX̂ with X̂τ^sW = τ^{−s}·M·W. */
  reference: number;
  /** On |δQ|/Q, Q = Σ_c w_c·Tr M_c^ω (branches without key take no negative power). */
  relativeQuasiEntropy: number;
}

/**
 * Both Rényi kinds built on M = Y^s·X̂·Y^s with W = ω·M^{ω−1}, s = (1 − ω)/(2ω): sandwiched-up with the fixed τ' as Y,
 * X̂ = w_c·X_c and ω = β; Petz-up with Y = Z(X_c), X̂ = X_c and ω = 1/α (its gradient also holds Z(∇_Y q), ∇_Y q =
 * D(t^s)(Y)[X̂Y^sW + WY^sX̂], pulled back to the face without grading). M's errors come in two forms:
 * - additive, Y^s·Δ·Y^s from the backward error Δ of X̂'s eigendecomposition (‖Δ‖_F ≤ scale·size_c);
 * - a congruence (1 + F)·M·(1 + F)†: Y^s's own error, F = δ(Y^s)·Y^{−s} with ‖δ(Y^s)‖ ≤ s·λ_min(Y)^{s−1}·‖δY‖ (for
 *   Petz-up Y = Z(X̂) moves with Δ too), and the one-sided Jacobi factorisation of M = G·G†, G = Y^s·V·Λ^{1/2}, whose
 *   columnwise relative backward error is a congruence with ‖F‖ ≤ scale·κ(Y^s) (Demmel & Veselić 1992).
 * The face block takes `clusterCharge` for each (f = t^{ω−1}); the products X̂Y^sW = ω·Y^{−s}·M^ω − Δ·Y^s·W move with
 * M^ω, Y^{−s} and Δ (below), then through D(t^s) at Y, a map that itself moves with Y's error; Q moves by ω·λ_0^{ω−1}·‖E‖_1 and by the factor (1 + ‖F‖)^{2ω}. X_c must have full rank on its support
 * (Infinity otherwise: the factor of M would then carry X's own small eigenvalues).
 */
export function quasiEntropyFaceCharges(
  objective: Objective,
  rho: ComplexMatrix,
  faceBasis: ComplexMatrix,
  scaleN: number,
  quasiEntropy: number,
  /** c/(Q·ln 2): ∇_ρF = factor·Σ_c w_c·(pulled-back branch gradient) for Petz-up; ∇_τF = factor·(…) for sandwiched-up. */
  gradientFactor: number,
  /** Sandwiched-up: τ' per branch (blocks on the support) and a, the coefficient of G's τ^s·(M^{β−1} − 1)·τ^s terms. */
  sandwiched?: { references: ReferenceBlocks; identityCoefficient: number },
): QuasiEntropyCharges {
  const { alpha } = objective.request;
  const order = sandwiched ? sandwichedOrder(alpha) : 1 / alpha;
  const p = order - 1;
  const s = (1 - order) / (2 * order);
  const rhoNorm = frobeniusNorm(rho);
  const divided = powerDividedDifference(p);
  const congruence = (a: number, b: number) => Math.min(a, b) ** p;
  const outputs = objective.branchOutputs(rho);
  let face = 0;
  let referenceCharge = 0;
  let quasiEntropyError = 0;
  objective.supports.forEach((support, c) => {
    if (isKeyless(support)) return;
    if (support.outputRange) {
      face = Infinity;
      return;
    }
    const weight = branchWeight(objective.request, support.score);
    const stateWeight = sandwiched ? weight : 1;
    const output = scale(outputs[c], stateWeight);
    const referenceBlocks = sandwiched ? sandwiched.references[c] : pinchedBlocks(output, support.blockSizes, support.blockOffsets);
    const referenceEigen = referenceBlocks.map((block) => eigh(hermitianPart(block)));
    const referenceValues = referenceEigen.flatMap((e) => Array.from(e.values));
    const referenceMin = Math.min(...referenceValues);
    const referenceMax = Math.max(...referenceValues);
    if (!(referenceMin > 0)) {
      face = Infinity;
      return;
    }
    const root = directSum(referenceEigen.map((e) => conjugate(e.vectors, ComplexMatrix.diagonal(Array.from(e.values, (t) => t ** s)))));
    const m = hermitianPart(conjugate(root, output));
    const size = stateWeight * outputSize(support, outputs[c], rhoNorm);
    const rootNorm = referenceMax ** s;
    const rootConditioning = (referenceMax / referenceMin) ** s;
    const referenceNorm = Math.sqrt(referenceValues.reduce((sum, t) => sum + t * t, 0));
    // Y's own eigendecomposition, and for Petz-up Y = Z(X̂) moving with Δ (the pinching does not grow ‖·‖_F).
    const referenceError = scaleN * (referenceNorm + (sandwiched ? 0 : size));
    const additive = scaleN * rootNorm ** 2 * size;
    const relative = 2 * scaleN * rootConditioning + s * referenceMin ** (s - 1) * referenceError * referenceMin ** -s;
    const eigenM = eigh(m);
    const smallest = Math.min(eigenM.values[0] - additive, eigenM.values[0] * (1 - relative) ** 2);
    if (!(smallest > 0)) {
      face = Infinity;
      return;
    }
    const onFace = support.krausOperators.map((k) => multiply(k, faceBasis));
    const maps = onFace.map((a) => multiply(root, a));
    const faceCoefficient = sandwiched ? Math.abs(sandwiched.identityCoefficient) * weight : Math.abs(gradientFactor) * weight * order;
    face += faceCoefficient * (clusterCharge(eigenM, maps, divided, additive) + clusterCharge(eigenM, maps, congruence, 2 * relative, true));
    // X̂·Y^s·W = ω·Y^{−s}·M^ω − Δ·Y^s·W: M^ω is concave in M, so an additive E moves it by at most ω·λ_0^{ω−1}·‖E‖_F
    // and a congruence by 2·λ_max^ω·‖F‖_F (|(t^ω)^[1](a, b)·b| ≤ max(a, b)^ω); Y^{−s} moves by s·λ_min(Y)^{−s−1}·‖δY‖.
    // Then twice (the Hermitian sum), and D(t^s) at Y.
    const largest = eigenM.values[eigenM.values.length - 1];
    const movedPower = order * (order * smallest ** p * additive + 2 * largest ** order * relative);
    const movedInverseRoot = s * referenceMin ** (-s - 1) * referenceError * order * largest ** order;
    const direction = 2 * (referenceMin ** -s * movedPower + movedInverseRoot + rootNorm * order * smallest ** p * scaleN * size);
    // D(t^s) at Y is itself taken at Y's computed eigendecomposition, exact for Y + E (‖E‖_F ≤ referenceError): the map
    // moves by D²(t^s)[E, H], at most 2·max|(t^s)^[2]|·‖E‖_F·‖H‖_F with |(t^s)^[2]| ≤ s(1 − s)/2·λ^{s−2} at the lowest
    // eigenvalue λ of the segment (mean value), and ‖H‖_F ≤ 2ω·λ_min(Y)^{−s}·‖M^ω‖_F.
    const segmentMin = referenceMin - 2 * referenceError;
    let powerNorm = 0;
    for (const t of eigenM.values) powerNorm += Math.max(t, 0) ** (2 * order);
    const movedMap =
      segmentMin > 0 ? s * (1 - s) * segmentMin ** (s - 2) * referenceError * 2 * order * referenceMin ** -s * Math.sqrt(powerNorm) : Infinity;
    const referenceGradient = s * referenceMin ** (s - 1) * direction + movedMap;
    if (sandwiched) {
      referenceCharge = Math.max(referenceCharge, Math.abs(gradientFactor) * referenceGradient);
    } else {
      // Petz-up: Z(∇_Y q) is pulled back to the face block through Σ_j (K_jP̂)†(·)(K_jP̂), whose norm on operators is
      // ‖Σ_j (K_jP̂)†K_jP̂‖ (a completely positive map attains it at 1; the pinching Z does not grow the norm either),
      // or graded by where the maps sit in Y's spectrum (`gradedPullBack`); the smaller holds.
      const argumentNorm = 2 * order * Math.max(segmentMin, 0) ** -s * Math.sqrt(powerNorm);
      const graded = gradedPullBack(referenceEigen, support, onFace, s, direction, argumentNorm, referenceError, scaleN);
      face += Math.abs(gradientFactor) * weight * Math.min(referenceGradient * pulledBackUnit(onFace, scaleN), graded);
    }
    let traceOfPower = 0;
    for (const t of eigenM.values) traceOfPower += Math.max(t, 0) ** order;
    const branchError = order * smallest ** p * Math.sqrt(m.rows) * additive + ((1 + relative) ** (2 * order) - 1) * traceOfPower;
    quasiEntropyError += (sandwiched ? 1 : weight) * branchError;
  });
  return { face, reference: referenceCharge, relativeQuasiEntropy: quasiEntropyError / quasiEntropy };
}

/**
 * The change of Σ_j N_j†·Z(D(t^s)(Y)[H])·N_j (N_j = K_jP̂, 0 < s < 1) when H moves by at most `argumentError` and Y by
 * at most `referenceError` (both Frobenius), graded by Y's spectrum (docs/faces.md, "The pull-back graded"). With
 * t^s = c_s·∫ λ^{s−1}·t/(t + λ) dλ, D(t^s)(Y)[H] = c_s·∫ λ^s·A·H·A dλ, A = (Y + λ)^{−1}, block by block of the
 * pinching. In Ŷ's eigenbasis (Ŷ = Y + E as decomposed) ‖ÂN‖_F² = Σ_i r_i/(λ_i + λ)², r_i the squared row norms of
 * V̂†N, so c_s·∫ λ^s·‖ÂN‖_F² = Σ_i r_i·f'(λ_i) bounds the share of δH; and ÂHÂ − AHA = −ÂEAHÂ − AHÂEA with
 * ‖A‖ ≤ 1/(b + λ), b = λ_0 − ‖E‖, ‖AN‖ ≤ κ·‖ÂN‖, κ = 1/(1 − ‖E‖/λ_0), so the share of E is at most
 * (1 + κ²)·‖E‖·‖H‖·Σ_i r_i·|f^[2](λ_i, λ_i, b)| (c_s·∫ λ^s/((a + λ)²(b + λ)) = |f^[2](a, a, b)|). Rows of N on large
 * eigenvalues pay f'(λ_i) and (1 − s)·λ_i^{s−2}, not the smallest eigenvalue's slopes.
 */
export function gradedPullBack(
  referenceEigen: readonly { values: Float64Array; vectors: ComplexMatrix }[],
  support: BranchSupport,
  onFace: readonly ComplexMatrix[],
  s: number,
  argumentError: number,
  argumentNorm: number,
  referenceError: number,
  scaleN: number,
): number {
  const derivative = (a: number) => s * a ** (s - 1);
  // |f^[2](a, a, b)| = (f^[1](a, b) − f'(a))/(a − b) for b < a (f = t^s concave); s(1 − s)/2·b^{s−2} bounds it anywhere.
  const second = (a: number, b: number) =>
    a > b * (1 + 1e-6) ? ((a ** s - b ** s) / (a - b) - derivative(a)) / (a - b) : (s * (1 - s) * b ** (s - 2)) / 2;
  let total = 0;
  referenceEigen.forEach((eigen, k) => {
    const lowest = eigen.values[0];
    if (!(referenceError < lowest / 2)) {
      total = Infinity;
      return;
    }
    const floor = lowest - referenceError;
    const kappa = 1 / (1 - referenceError / lowest);
    const offset = support.blockOffsets[k];
    for (const map of onFace) {
      const block = rows(map, offset, offset + support.blockSizes[k]);
      // The rows' rounding (product and the eigenvectors' backward error) within scaleN·√m·‖N‖_F each.
      const slack = scaleN * Math.sqrt(block.rows) * frobeniusNorm(block);
      rowSquares(multiplyAdjointLeft(eigen.vectors, block)).forEach((r, i) => {
        const share = (Math.sqrt(r) + slack) ** 2;
        const value = Math.max(eigen.values[i], lowest);
        total += share * (derivative(value) * argumentError + (1 + kappa * kappa) * referenceError * argumentNorm * second(value, floor));
      });
    }
  });
  return total;
}

/** ≥ λ_max(Σ_j A_j†A_j) for A_j = K_jP̂: the computed eigenvalue plus its backward error. */
export function pulledBackUnit(onFace: readonly ComplexMatrix[], scaleN: number): number {
  const sum = ComplexMatrix.zeros(onFace[0].cols);
  for (const a of onFace) addScaledInPlace(sum, multiplyAdjointLeft(a, a), 1);
  const unit = hermitianPart(sum);
  return (eigvalsh(unit).at(-1) as number) + scaleN * frobeniusNorm(unit);
}
