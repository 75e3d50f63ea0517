import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  kron,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  columns,
} from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { rangeIsometry } from '../linear-algebra/support.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { ValidationError } from './errors.js';
import { compensatedLeak, isometryDefect } from './exposure-leak.js';
import type { AnnouncementBranch, LinearConstraint, Problem } from './model.js';

/**
 * Eigenvalues within EDGE_CONSTANT·n·u·‖Γ‖_F of a spectral edge count as the edge when deciding that a
 * constraint pins ρ to an eigenspace (the eigensolver's backward-error scale, with a generous constant).
 */
export const EDGE_CONSTANT = BACKWARD_ERROR_CONSTANT;

/**
 * An exposing direction found by the optimiser (src/oracle/face-exposure.ts) and re-checked here: signed
 * multipliers y, nonzero only on equality constraints, with Z = Σ y_i (b_i·1 − Γ_i) ⪰ 0. Every feasible ρ has
 * Tr(Zρ) = Σ y_i (b_i − Tr Γ_i ρ) = 0, so ρ lives on ker Z (facial reduction, Borwein & Wolkowicz 1981).
 */
export interface FaceExposure {
  /** One per constraint of the problem, in order. */
  multipliers: number[];
}

/** An exposure that fails its check: the field names it, the reason says why. */
export class FaceExposureError extends ValidationError {
  constructor(field: string, reason: string) {
    super(field, reason);
    this.name = 'FaceExposureError';
  }
}

/** The smallest face of the PSD cone known to hold every feasible ρ: ρ = P·ρ̃·P† with P an isometry. */
export interface FeasibleFace {
  /** d × r isometry, or null when the face is the whole space. */
  isometry: ComplexMatrix | null;
  dimension: number;
  /** Why each reduction was made, for the user and the logs. */
  reasons: string[];
  /** The exposures applied after the exact reductions (empty when none were given). */
  exposures: FaceExposure[];
  /**
   * ε with Tr((1 − Π)ρ) ≤ ε for every feasible ρ, Π the orthogonal projector onto range P: the exposed kernel is
   * exact only up to rounding, so a feasible state may carry this much weight off the face (docs/faces.md). 0
   * without exposures; Infinity after more than one exposure (a second one is checked on the face only, which
   * bounds the leak only to the fourth root).
   */
  leak?: number;
  /** g ≥ ‖P†P − 1‖₂, recorded with exposures: P is an isometry only to rounding (the continuity margin pays for it). */
  gramDefect?: number;
  /** The constraint operators Γ_i on H_A ⊗ H_B, recorded with exposures (the continuity margin pays for them). */
  constraintOperators?: ComplexMatrix[];
}

export interface FeasibleFaceOptions {
  /** Exposing directions to apply, in order, after the exact reductions; each is checked (FaceExposureError). */
  exposures?: readonly FaceExposure[];
  /** Called before every eigendecomposition; throws to abort. */
  checkpoint?: () => void;
}

function edgeTolerance(n: number, operator: ComplexMatrix): number {
  return EDGE_CONSTANT * n * UNIT_ROUNDOFF * Math.max(frobeniusNorm(operator), Number.MIN_VALUE);
}

/**
 * Exact facial reduction from the problem data: a rank-deficient source marginal confines ρ to
 * supp(ρ_A) ⊗ H_B; a constraint whose bound sits at an edge of its operator's spectrum (upper ≤ λ_min,
 * or lower ≥ λ_max) confines ρ to that eigenspace. Repeated until nothing changes.
 */
export function feasibleFace(problem: Problem, options: FeasibleFaceOptions = {}): FeasibleFace {
  const { checkpoint } = options;
  const d = problem.dimensionA * problem.dimensionB;
  const reasons: string[] = [];
  let isometry: ComplexMatrix | null = null;
  if (problem.sourceMarginal) {
    const support = rangeIsometry(problem.sourceMarginal);
    if (support.cols < problem.dimensionA) {
      isometry = kron(support, ComplexMatrix.identity(problem.dimensionB));
      reasons.push(`source marginal has rank ${support.cols} < ${problem.dimensionA}: ρ lives on supp(ρ_A) ⊗ H_B`);
    }
  }
  let changed = true;
  while (changed) {
    changed = false;
    for (const constraint of problem.constraints) {
      const operator = isometry ? conjugateAdjoint(isometry, constraint.operator) : constraint.operator;
      const n = operator.rows;
      if (n <= 1) break;
      checkpoint?.();
      const { values, vectors } = eigh(operator);
      // Relative to the operator as given: its restriction inherits absolute rounding errors of that size, and a
      // restriction that vanishes (a direction already excluded) must not have its noise read as a spectrum.
      const tolerance = edgeTolerance(constraint.operator.rows, constraint.operator);
      let keep: ComplexMatrix | null = null;
      if (values[n - 1] - values[0] <= tolerance) continue;
      if (Math.abs(constraint.upper - values[0]) <= tolerance) {
        let count = 0;
        while (count < n && values[count] <= values[0] + tolerance) count++;
        if (count < n) keep = columns(vectors, 0, count);
      } else if (Math.abs(constraint.lower - values[n - 1]) <= tolerance) {
        let first = n - 1;
        while (first > 0 && values[first - 1] >= values[n - 1] - tolerance) first--;
        if (first > 0) keep = columns(vectors, first, n);
      }
      if (keep) {
        isometry = isometry ? multiply(isometry, keep) : keep;
        reasons.push(`constraint "${constraint.label}" sits at an edge of its spectrum: face of dimension ${keep.cols}`);
        changed = true;
      }
    }
  }
  const exposures = options.exposures ?? [];
  let leak = 0;
  let gramDefect = 0;
  exposures.forEach((exposure, k) => {
    checkpoint?.();
    const exposed = exposedKernel(problem, isometry, exposure, `exposures[${k}]`);
    isometry = isometry ? multiply(isometry, exposed.keep) : exposed.keep;
    leak = k === 0 ? exposed.leak : Infinity;
    gramDefect = isometryDefect(isometry);
    reasons.push(`exposing direction ${k} (a positive semidefinite combination of equalities) confines ρ to a face of dimension ${exposed.keep.cols}`);
  });
  return {
    isometry,
    dimension: isometry ? isometry.cols : d,
    reasons,
    exposures: exposures.map((e) => ({ multipliers: [...e.multipliers] })),
    leak,
    ...(exposures.length > 0 ? { gramDefect, constraintOperators: problem.constraints.map((c) => c.operator) } : {}),
  };
}

/**
 * Z = Σ y_i (b_i·1 − Γ_i) on the current face P (P†ZP), checked positive semidefinite to rounding, and its
 * kernel: eigenvalues within the rounding level of Σ|y_i|(‖Γ_i‖_F + |b_i|·√n) count as zero.
 */
function exposedKernel(
  problem: Problem,
  isometry: ComplexMatrix | null,
  exposure: FaceExposure,
  field: string,
): { keep: ComplexMatrix; leak: number } {
  const m = problem.constraints.length;
  const y = exposure?.multipliers;
  if (!Array.isArray(y) || y.length !== m || !y.every((v) => typeof v === 'number' && Number.isFinite(v))) {
    throw new FaceExposureError(`${field}.multipliers`, `must be ${m} finite numbers`);
  }
  const n = problem.dimensionA * problem.dimensionB;
  const z = ComplexMatrix.zeros(n);
  let scale = 0;
  problem.constraints.forEach((c, i) => {
    if (y[i] === 0) return;
    if (c.lower !== c.upper) throw new FaceExposureError(`${field}.multipliers[${i}]`, `constraint "${c.label}" is not an equality`);
    for (let t = 0; t < n * n; t++) {
      z.re[t] -= y[i] * c.operator.re[t];
      z.im[t] -= y[i] * c.operator.im[t];
    }
    for (let a = 0; a < n; a++) z.re[a * n + a] += y[i] * c.lower;
    scale += Math.abs(y[i]) * (frobeniusNorm(c.operator) + Math.abs(c.lower) * Math.sqrt(n));
  });
  if (!(scale > 0)) throw new FaceExposureError(`${field}.multipliers`, 'are all zero');
  const onFace = isometry ? conjugateAdjoint(isometry, z) : z;
  const r = onFace.rows;
  const { values, vectors } = eigh(onFace);
  const tolerance = EDGE_CONSTANT * n * UNIT_ROUNDOFF * scale;
  if (values[0] < -tolerance) {
    throw new FaceExposureError(field, `Σ y_i (b_i·1 − Γ_i) is not positive semidefinite (eigenvalue ${values[0].toExponential(3)})`);
  }
  let count = 0;
  while (count < r && values[count] <= tolerance) count++;
  if (count === r) throw new FaceExposureError(field, 'the combination vanishes on the face (exposes nothing)');
  if (count === 0) throw new FaceExposureError(field, 'the combination is positive definite on the face: no density operator is feasible');
  // Tr(Zρ) = 0 for feasible ρ. Z as formed is off by at most (terms + 1)·u·scale, the compression to the face and
  // eigh each add at most c·n·u·‖Ẑ‖_F, the kept kernel eigenvalues are at most their largest modulus; so
  // λ_W·Tr(P_W ρ) ≤ η for the smallest exposed eigenvalue λ_W (docs/faces.md, "How far off the face").
  let kernelSize = 0;
  for (let k = 0; k < count; k++) kernelSize = Math.max(kernelSize, Math.abs(values[k]));
  const terms = y.filter((v) => v !== 0).length;
  const eta = kernelSize + 2 * EDGE_CONSTANT * n * UNIT_ROUNDOFF * frobeniusNorm(z) + (terms + 1) * UNIT_ROUNDOFF * scale;
  const keep = columns(vectors, 0, count);
  const leak = Math.min(1, eta / values[count]);
  // On the full space the kernel block is also read in double-double, at the data's own rounding (docs/faces.md).
  const compensated = isometry ? null : compensatedLeak(problem.constraints, y, z, keep);
  return { keep, leak: compensated === null ? leak : Math.min(leak, compensated) };
}

/** The problem seen on the face: Kraus operators K·P, constraint operators P†ΓP (ρ̃ of size r × r). */
export function restrictToFace(problem: Problem, face: FeasibleFace): Problem {
  const p = face.isometry;
  if (!p) return problem;
  const constraints: LinearConstraint[] = problem.constraints.map((c) => ({
    ...c,
    operator: conjugateAdjoint(p, c.operator),
  }));
  const branches: AnnouncementBranch[] = problem.branches.map((b) => ({
    ...b,
    krausOperators: b.krausOperators.map((k) => multiply(k, p)),
  }));
  return { ...problem, sourceMarginal: undefined, constraints, branches };
}

/** ρ = P·ρ̃·P† back on H_A ⊗ H_B. */
export function liftFromFace(face: FeasibleFace, reduced: ComplexMatrix): ComplexMatrix {
  const p = face.isometry;
  if (!p) return reduced;
  return conjugate(p, reduced);
}

/** ρ̃ = P†·ρ·P. */
export function compressToFace(face: FeasibleFace, rho: ComplexMatrix): ComplexMatrix {
  return face.isometry ? conjugateAdjoint(face.isometry, rho) : rho;
}


/** Binary entropy in bits. */
function binaryEntropy(p: number): number {
  return p <= 0 || p >= 1 ? 0 : -p * Math.log2(p) - (1 - p) * Math.log2(1 - p);
}

/**
 * What a linearization bound computed on an exposed face gives up for feasible states that leave the face
 * (docs/faces.md, "The continuity margin"): with t = √ε + ε/2 ≥ ½‖ρ − ρ̃‖₁ (gentle measurement) for ρ̃ the
 * normalised projection of a feasible ρ onto the face, and g' = g/(1 − g) for the isometry's Gram defect g
 * (ρ̃ = P·X·P† with Tr X within g' of 1),
 *   min(Σ_i (y⁺_i + y⁻_i)·‖Γ_i‖_F·(2t + g'), ‖Y‖_∞·(2t + g'), 2√ε·‖ΠYQ‖_∞ + (2ε + g')·‖Y‖_∞)
 *                                           (X/Tr X meets each constraint only to ‖Γ_i‖_∞·‖ρ − P(X/Tr X)P†‖₁;
 *                                            Y = Σ_i (y⁺_i − y⁻_i)Γ_i, and by blocks only ΠYQ pays √ε)
 *   + min(2·(t·log₂(D − 1) + h(t)),         (Fannes–Audenaert, for H(ω) and H(Z(ω)) of ω = ⊕_c X_c ⊕ rest)
 *         2t·log₂ d_K + (1 + t)·h(t/(1 + t)))  (Alicki–Fannes–Winter, for H(ω) − H(Z(ω)) = H(K|S) of a key copy K)
 *   + 2t·max_c |f(c)|                       (the scores, linear in the branch weights)
 *   + g'·(|bound| + the first line)          (F is homogeneous of degree 1: F(ρ̃) = Tr X·F(P(X/Tr X)P†)).
 * 0 on a face without exposures; Infinity where no margin is derived (Rényi kinds, several exposures, t too large).
 */
export function faceContinuityMargin(
  face: FeasibleFace,
  restricted: Problem,
  kind: string,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
  /** The linearization bound on the face before this margin. */
  bound: number,
): number {
  const leak = face.leak ?? 0;
  if (face.exposures.length === 0 || leak === 0) return 0;
  const operators = face.constraintOperators;
  const gram = face.gramDefect;
  if (kind !== 'von-neumann' || !Number.isFinite(leak) || !operators || gram === undefined || !(gram < 0.5)) return Infinity;
  const t = Math.sqrt(leak) + leak / 2;
  const renormalised = gram / (1 - gram);
  // D: the dimension of ω = ⊕_c K_c ρ K_c† ⊕ Tr((1 − Σ K†K)ρ), which ρ ↦ ω maps trace-preservingly; d_K: the
  // most key values of a branch (the pinchings of all branches are one pinching of ω with that many projectors).
  let outputs = 1;
  let keyValues = 1;
  let largestScore = 0;
  for (const branch of restricted.branches) {
    outputs += branch.krausOperators[0]?.rows ?? 0;
    keyValues = Math.max(keyValues, branch.keyProjectors.length);
    largestScore = Math.max(largestScore, Math.abs(branch.score));
  }
  if (!(t <= 1 - 1 / outputs)) return Infinity;
  let normWeight = 0;
  operators.forEach((op, i) => (normWeight += (multipliersLower[i] + multipliersUpper[i]) * frobeniusNorm(op)));
  // |Σ_i (y⁺_i − y⁻_i)·Tr Γ_i(ρ − σ)| ≤ ‖Σ_i (y⁺_i − y⁻_i)Γ_i‖_∞·‖ρ − σ‖₁ too: the combination often cancels.
  const combination = constraintCombination(operators, multipliersLower, multipliersUpper, normWeight);
  const whole = Math.min(normWeight, combination.operatorNorm) * (2 * t + renormalised);
  // By blocks only the cross block pays √ε: 2√ε·‖ΠYQ‖_∞ + (2ε + g')·‖Y‖_∞ (docs/faces.md).
  const byBlocks = face.isometry
    ? 2 * Math.sqrt(leak) * crossBlockNorm(face.isometry, combination, gram) + (2 * leak + renormalised) * combination.operatorNorm
    : Infinity;
  const constraintShift = Math.min(whole, byBlocks);
  const fannes = 2 * (t * Math.log2(Math.max(outputs - 1, 1)) + binaryEntropy(t));
  // Both bound the same change; the conditional-entropy form pays h once and log₂ of the key alphabet, not of D.
  const conditional = 2 * t * Math.log2(keyValues) + (1 + t) * binaryEntropy(t / (1 + t));
  const continuity = Math.min(fannes, conditional) + 2 * t * largestScore;
  return constraintShift + continuity + renormalised * (Math.abs(bound) + constraintShift);
}

/** Y = Σ_i (y⁺_i − y⁻_i)·Γ_i as summed in doubles, with bounds on its rounding and on the exact Y's norms. */
interface ConstraintCombination {
  /** Ŷ, the sum in doubles. */
  sum: ComplexMatrix;
  /** R ≥ ‖Y − Ŷ‖_F: (terms + 1)·u·Σ|y|‖Γ‖ per entry. */
  rounding: number;
  /** ≥ ‖Y‖_∞ (|Tr(YΔ)| ≤ ‖Y‖_∞·‖Δ‖₁). */
  operatorNorm: number;
}

/**
 * The combination of the certificate's multipliers: ‖Y‖_∞ is bounded by the largest |eigenvalue| of Ŷ plus the
 * eigensolver's backward error c·n·u·‖Ŷ‖_F (docs/math.md §5) and the rounding R, whose Frobenius bound also bounds
 * its operator norm.
 */
function constraintCombination(
  operators: readonly ComplexMatrix[],
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
  weight: number,
): ConstraintCombination {
  const n = operators[0]?.rows ?? 0;
  const sum = ComplexMatrix.zeros(n);
  let terms = 0;
  operators.forEach((op, i) => {
    const y = multipliersLower[i] - multipliersUpper[i];
    if (y === 0) return;
    terms++;
    addScaledInPlace(sum, op, y);
  });
  const rounding = 2 * n * (terms + 1) * UNIT_ROUNDOFF * weight;
  const frobenius = frobeniusNorm(sum) * (1 + 2 * n * UNIT_ROUNDOFF);
  const values = eigvalsh(sum);
  const largest = Math.max(Math.abs(values[0] ?? 0), Math.abs(values[values.length - 1] ?? 0));
  return { sum, rounding, operatorNorm: largest + BACKWARD_ERROR_CONSTANT * n * UNIT_ROUNDOFF * frobenius + rounding };
}

/**
 * An upper bound on ‖ΠYQ‖_∞, the block of Y between the face (Π, the orthogonal projector onto range P) and its
 * complement Q = 1 − Π (docs/faces.md, "The continuity margin", step 3). With G = P†P, ‖G − 1‖ ≤ g:
 * ΠYQ = P·G⁻¹·P†Y(1 − Π), ‖P·G⁻¹‖ = ‖G⁻¹‖^½ ≤ (1 − g)^−½, and P†Y(1 − Π) differs from B = P†Y(1 − PP†) by
 * P†Y·P(G⁻¹ − 1)P†, at most (1 + g)^{3/2}·g/(1 − g)·‖Y‖_∞. B is formed from Ŷ in three products, each charged
 * c·m·u·‖A‖_F‖B‖_F for inner dimension m (the standard product bound with the project's generous c; Higham,
 * Accuracy and Stability of Numerical Algorithms, 2nd ed., §3.5; from memory), Y − Ŷ costs √(1 + g)·(2 + g)·R, and
 * ‖B̂‖_∞ comes from the eigenvalues of B̂B̂† with their backward error and the product's rounding.
 */
function crossBlockNorm(isometry: ComplexMatrix, combination: ConstraintCombination, gram: number): number {
  const n = isometry.rows;
  const k = isometry.cols;
  const scale = BACKWARD_ERROR_CONSTANT * UNIT_ROUNDOFF;
  const isometryFrobenius = frobeniusNorm(isometry);
  const faceRows = multiplyAdjointLeft(isometry, combination.sum); // P†Ŷ, k × n
  const faceBlock = multiply(faceRows, isometry); // P†ŶP, k × k
  const back = multiplyAdjointRight(faceBlock, isometry); // P†ŶPP†, k × n
  const cross = faceRows.clone();
  addScaledInPlace(cross, back, -1);
  const rowsFrobenius = frobeniusNorm(faceRows);
  const blockFrobenius = frobeniusNorm(faceBlock);
  const productRounding =
    scale * n * isometryFrobenius * frobeniusNorm(combination.sum) * (1 + 2 * (1 + gram)) +
    scale * n * rowsFrobenius * isometryFrobenius * Math.sqrt(1 + gram) +
    scale * k * blockFrobenius * isometryFrobenius +
    UNIT_ROUNDOFF * (rowsFrobenius + frobeniusNorm(back));
  const gramian = multiplyAdjointRight(cross, cross);
  const top = eigvalsh(gramian);
  const crossFrobenius = frobeniusNorm(cross);
  const squared = Math.max(0, top[top.length - 1] ?? 0) + scale * k * frobeniusNorm(gramian) + scale * n * crossFrobenius ** 2;
  const computed = Math.sqrt(squared) + productRounding + Math.sqrt(1 + gram) * (2 + gram) * combination.rounding;
  return (computed + (1 + gram) ** 1.5 * (gram / (1 - gram)) * combination.operatorNorm) / Math.sqrt(1 - gram);
}
