import {
  addScaledInPlace,
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  hermitianPart,
  multiply,
  scale,
  subtract,
} from '../linear-algebra/complex-matrix.js';
import { supportDecomposition } from '../linear-algebra/support.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import { branchSupport, type BranchSupport } from './branch-supports.js';
import { petzDownQuasiEntropy } from './petz-down.js';
import { petzUpQuasiEntropy } from './petz-up.js';
import {
  DEFAULT_REFERENCE_SETTINGS,
  referenceSettingsFor,
  optimalReference,
  sandwichedBranchTerm,
  type ReferenceBlocks,
  type SandwichedBranchTerm,
  type ReferenceSettings,
} from './sandwiched-up.js';
import { readConditioning, readDerivedConditioning, readOutputFloor, resetConditioning } from './spectral-blocks.js';
import { relativeEntropyToPinched } from './von-neumann.js';
import { identityDefect, type IdentityDefect } from './identity-defect.js';

export interface ObjectiveEvaluation {
  /** F(ρ) in bits. */
  value: number;
  /** ∇_ρ F (Hermitian, on H), or null when not requested or when ρ is rank deficient (no gradient exists). */
  gradient: ComplexMatrix | null;
  /** Sandwiched-up only: the optimal key-block-diagonal τ at this ρ and the certified inner gap on Q. */
  reference?: ReferenceBlocks;
  innerGap?: number;
  /** Largest ‖A‖_F/λ_min(A) over the positive matrices whose functions were taken (for the certificate margin). */
  conditioning?: number;
  /** The same without the branch outputs X_c, whose errors the margin follows through the curvature of F. */
  derivedConditioning?: number;
}

export interface EvaluateOptions {
  withGradient?: boolean;
  /** Skip the rank test when the caller guarantees a full-rank ρ (the optimiser does). */
  assumeFullRank?: boolean;
}

/**
 * ∇_ρF = a·1 + G with G formed without the cancellation of the identity part a·1 (|a| ≈ |c|/ln 2 grows like
 * 1/(α − 1)), and the linearization's constant F − ⟨∇_ρF, ρ⟩ − ⟨∇_τF, τ⟩ + a (docs/math.md §5, "The identity part").
 * On density operators ⟨a·1, σ⟩ = a exactly, so a never meets a rounding.
 */
export interface IdentitySplit {
  identityCoefficient: number;
  remainder: ComplexMatrix;
  /** F − c/ln 2 + a = (c/ln 2)·(log1p(q) − q/Q) + 1/(Q·ln 2), q = Q − 1 (c·(β − 1) = 1 exactly). */
  constant: number;
  /** |Q·∂constant/∂Q| = |c·q − 1|/(Q·ln 2): what a relative error of Q does to the constant. */
  constantSensitivity: number;
  /** |a| times the rounding bound of Σ K†K − 1 inside the remainder. */
  defectError: number;
}

/** Value and gradient of F at a fixed τ (sandwiched-up), as used by the joint linearization of a certificate. */
export interface JointEvaluation {
  value: number;
  gradientState: ComplexMatrix;
  /** ∇_τ F per branch and key block. */
  gradientReference: ComplexMatrix[][];
  /** As in ObjectiveEvaluation. */
  conditioning: number;
  derivedConditioning: number;
  /** The same ∇_ρF as a·1 + G. */
  split: IdentitySplit;
}

/**
 * How the gradient's error from the branch outputs reaches given directions (src/certificate/bound.ts): `measure(B)`
 * gives for each branch c, for a Hermitian direction B on H, ‖∂_{X_c}⟨∇F, B⟩‖_F (the c-th block of the Hessian of F
 * in the outputs, applied to the outputs' change Σ_j K B K†, by a forward difference); `sizes` per branch is
 * ‖X_c‖_F + ‖ρ‖_F·Σ_j ‖K_j‖_F², the outputs' perturbation that one rounding of ρ and of X_c's eigendecomposition
 * stands for (in units of the backward-error scale).
 */
export interface OutputCurvature {
  sizes: number[];
  measure(direction: ComplexMatrix): number[];
}

export interface Objective {
  readonly request: Required<EntropyRequest>;
  readonly dimension: number;
  readonly supports: readonly BranchSupport[];
  evaluate(rho: ComplexMatrix, options?: EvaluateOptions): ObjectiveEvaluation;
  /** X_c = Σ_j K_j·ρ·K_j† per branch, on the branch's support (before the branch weights). */
  branchOutputs(rho: ComplexMatrix): ComplexMatrix[];
  /** Sandwiched-up at a given τ (no inner optimisation); throws for other kinds. */
  evaluateAtReference(rho: ComplexMatrix, reference: ReferenceBlocks): JointEvaluation;
  /** Null when ρ has no positive definite outputs to differentiate at. Sandwiched-up needs τ (held fixed). */
  outputCurvature(rho: ComplexMatrix, reference?: ReferenceBlocks): OutputCurvature | null;
  /**
   * Sandwiched-up: the error of F (bits) the caller tolerates from the inner maximisation over τ; until it is met the
   * inner loop does not take slow contraction for its rounding floor. Other kinds have no inner loop and ignore it.
   */
  allowInnerError(bits: number): void;
}

/** D = Σ K†K − 1 is summed with compensation when |c|/ln 2 times the plain sums' rounding bound would exceed this (bits). */
const DEFECT_COMPENSATION_THRESHOLD = 1e-13;

/** Forward-difference step of the curvature, as a share of the smallest output eigenvalue (truncation ∝ this share). */
const CURVATURE_STEP_SHARE = 1e-3;

/** Branch weight w_c = 2^{((α−1)/α)f(c)} (Petz-down: 2^{(α−1)f(c)}) so a constant score k shifts every kind by −k. */
export function branchWeight(request: Required<EntropyRequest>, score: number): number {
  const { kind, alpha } = request;
  if (kind === 'von-neumann') return 1;
  const exponent = kind === 'petz-down' ? (alpha - 1) * score : ((alpha - 1) / alpha) * score;
  return 2 ** exponent;
}

/** w_c − 1 without cancellation (expm1), for the identity split of the gradient. */
export function branchWeightMinusOne(request: Required<EntropyRequest>, score: number): number {
  const { kind, alpha } = request;
  if (kind === 'von-neumann') return 0;
  const exponent = kind === 'petz-down' ? (alpha - 1) * score : ((alpha - 1) / alpha) * score;
  return Math.expm1(exponent * Math.LN2);
}

/** The coefficient c in F = c·log2 Q for the Rényi kinds. */
export function logCoefficient(request: Required<EntropyRequest>): number {
  const { kind, alpha } = request;
  if (kind === 'petz-up') return alpha / (1 - alpha);
  if (kind === 'petz-down') return 1 / (1 - alpha);
  if (kind === 'sandwiched-up') return (2 * alpha - 1) / (1 - alpha);
  throw new Error(`logCoefficient: ${kind} has no logarithm form`);
}

/** The largest of ρ's and the branch outputs' dimensions: what the costs of exact-arithmetic and cluster work scale with. */
export function largestDimension(objective: Pick<Objective, 'dimension' | 'supports'>): number {
  return objective.supports.reduce((size, support) => Math.max(size, support.dimension), objective.dimension);
}

/** β = α/(2α−1), the sandwiched order dual to α. */
export function sandwichedOrder(alpha: number): number {
  return alpha / (2 * alpha - 1);
}

/** β − 1 = (1 − α)/(2α − 1), with 1 − α and 2α − 1 exact in floating point for α ∈ (1, 2]. */
export function sandwichedOrderDefect(alpha: number): number {
  return (1 - alpha) / (2 * alpha - 1);
}

export function normaliseRequest(request: EntropyRequest): Required<EntropyRequest> {
  if (request.kind === 'von-neumann') return { kind: request.kind, alpha: 1 };
  const alpha = request.alpha;
  if (alpha === undefined || !Number.isFinite(alpha) || alpha <= 1 || alpha > 2) {
    throw new RangeError(`alpha: must lie in (1, 2] for ${request.kind}; Rényi objectives are not convex outside it`);
  }
  return { kind: request.kind, alpha };
}

/** `referenceSettings` tune the sandwiched-up inner maximisation over τ (ignored by the other kinds). */
export function createObjective(
  problem: Problem,
  request: EntropyRequest,
  referenceSettings?: ReferenceSettings,
): Objective {
  const normalised = normaliseRequest(request);
  return new EntropyObjective(problem, normalised, referenceSettings ?? referenceSettingsFor(normalised.alpha));
}

class EntropyObjective implements Objective {
  readonly request: Required<EntropyRequest>;
  readonly dimension: number;
  readonly supports: readonly BranchSupport[];
  private readonly weights: number[];
  private readonly weightsMinusOne: number[];
  /** Σ K†K − 1 over every branch, computed once at the first certificate (sandwiched-up). */
  private defect: IdentityDefect | undefined;
  private referenceSettings: ReferenceSettings;
  /** Last optimal τ: the next evaluation (a nearby ρ in a line search) starts its fixed-point iteration there. */
  private lastReference: ReferenceBlocks | undefined;

  constructor(
    private readonly problem: Problem,
    request: Required<EntropyRequest>,
    referenceSettings: ReferenceSettings = DEFAULT_REFERENCE_SETTINGS,
  ) {
    this.request = request;
    this.referenceSettings = referenceSettings;
    this.dimension = problem.branches[0].krausOperators[0].cols;
    // A branch that can never occur contributes nothing to any kind.
    this.supports = problem.branches.map(branchSupport).filter((s) => s.dimension > 0);
    this.weights = this.supports.map((s) => branchWeight(request, s.score));
    this.weightsMinusOne = this.supports.map((s) => branchWeightMinusOne(request, s.score));
  }

  allowInnerError(bits: number): void {
    if (this.request.kind !== 'sandwiched-up') return;
    // F = c·log₂ Q, so an error δ of Q costs |c|·δ/(Q·ln 2) bits.
    const stagnationAllowance = (bits * Math.LN2) / Math.abs(logCoefficient(this.request));
    this.referenceSettings = { ...this.referenceSettings, stagnationAllowance };
  }

  branchOutputs(rho: ComplexMatrix): ComplexMatrix[] {
    return this.supports.map((support) => {
      const out = ComplexMatrix.zeros(support.dimension);
      for (const k of support.krausOperators) addScaledInPlace(out, conjugate(k, rho), 1);
      return out;
    });
  }

  /** ∇_ρ = Σ_c Σ_j K̂_{c,j}† G_c K̂_{c,j}, symmetrised: products in different orders leave a rounding-level anti-Hermitian part. */
  private pullBack(gradients: readonly ComplexMatrix[]): ComplexMatrix {
    const total = ComplexMatrix.zeros(this.dimension);
    this.supports.forEach((support, c) => {
      for (const k of support.krausOperators) addScaledInPlace(total, conjugateAdjoint(k, gradients[c]), 1);
    });
    return hermitianPart(total);
  }

  evaluate(rho: ComplexMatrix, options: EvaluateOptions = {}): ObjectiveEvaluation {
    resetConditioning();
    const evaluation = this.evaluateTracked(rho, options);
    return { ...evaluation, conditioning: readConditioning(), derivedConditioning: readDerivedConditioning() };
  }

  private evaluateTracked(rho: ComplexMatrix, options: EvaluateOptions): ObjectiveEvaluation {
    if (rho.rows !== this.dimension || rho.cols !== this.dimension) {
      throw new RangeError(`state: expected ${this.dimension}x${this.dimension}, got ${rho.rows}x${rho.cols}`);
    }
    if (options.assumeFullRank !== true) {
      const support = supportDecomposition(rho, 'state');
      if (support.rank < this.dimension) return this.evaluateOnSupport(rho, support.range);
    }
    const withGradient = options.withGradient ?? true;
    const states = this.branchOutputs(rho);
    const { kind, alpha } = this.request;
    if (kind !== 'sandwiched-up') {
      const { value, gradients } = this.fromOutputs(states, withGradient);
      return { value, gradient: gradients ? this.pullBack(gradients) : null };
    }
    const coefficient = logCoefficient(this.request);
    const ln2 = Math.LN2;
    const beta = sandwichedOrder(alpha);
    const weighted = states.map((x, c) => scale(x, this.weights[c]));
    const optimum = optimalReference(weighted, this.supports, beta, this.referenceSettings, this.lastReference, true);
    this.lastReference = optimum.reference;
    const value = coefficient * Math.log2(optimum.quasiEntropy);
    if (!withGradient) return { value, gradient: null, reference: optimum.reference, innerGap: optimum.innerGap };
    // Envelope theorem: at the inner optimum, ∇_ρ F is the partial gradient at fixed τ.
    const factor = coefficient / (optimum.quasiEntropy * ln2);
    const gradients = optimum.terms.map((t, c) => scale(t.gradientState, factor * this.weights[c]));
    return {
      value,
      gradient: this.pullBack(gradients),
      reference: optimum.reference,
      innerGap: optimum.innerGap,
    };
  }

  /**
   * A rank-deficient ρ = P·ρ̃·P† has no gradient; its value is that of the full-rank ρ̃ for the Kraus operators
   * K·P, whose output supports are then exact (no eigenvalue of a rank-deficient product is ever clipped).
   */
  private evaluateOnSupport(rho: ComplexMatrix, range: ComplexMatrix): ObjectiveEvaluation {
    const onSupport = new EntropyObjective(
      {
        ...this.problem,
        branches: this.problem.branches.map((b) => ({ ...b, krausOperators: b.krausOperators.map((k) => multiply(k, range)) })),
      },
      this.request,
      this.referenceSettings,
    );
    const reduced = onSupport.evaluate(conjugateAdjoint(range, rho), { assumeFullRank: true, withGradient: false });
    return { ...reduced, gradient: null };
  }

  /** F and ∂F/∂X_c (before the pull-back) from the branch outputs, for von Neumann and the Petz kinds. */
  private fromOutputs(states: readonly ComplexMatrix[], withGradient: boolean): { value: number; gradients: ComplexMatrix[] | null } {
    const { kind, alpha } = this.request;
    const ln2 = Math.LN2;
    if (kind === 'von-neumann') {
      let value = 0;
      const gradients: ComplexMatrix[] = [];
      this.supports.forEach((support, c) => {
        const term = relativeEntropyToPinched(states[c], support, withGradient);
        let branchTrace = 0;
        for (let i = 0; i < support.dimension; i++) branchTrace += states[c].re[i * support.dimension + i];
        value += term.value / ln2 - support.score * branchTrace;
        if (term.gradient) {
          const g = scale(term.gradient, 1 / ln2);
          for (let i = 0; i < support.dimension; i++) g.re[i * support.dimension + i] -= support.score;
          gradients.push(g);
        }
      });
      return { value, gradients: withGradient ? gradients : null };
    }
    const coefficient = logCoefficient(this.request);
    const quasi = kind === 'petz-up' ? petzUpQuasiEntropy : petzDownQuasiEntropy;
    const terms = this.supports.map((support, c) => quasi(states[c], support, alpha, withGradient));
    const total = terms.reduce((s, t, c) => s + this.weights[c] * t.value, 0);
    const value = coefficient * Math.log2(total);
    if (!withGradient) return { value, gradients: null };
    const factor = coefficient / (total * ln2);
    return { value, gradients: terms.map((t, c) => scale(t.gradient as ComplexMatrix, factor * this.weights[c])) };
  }

  /** Sandwiched-up at fixed τ: F, ∂F/∂X_c before the pull-back, and ∇_τ F per branch and key block. */
  private fromOutputsAtReference(
    states: readonly ComplexMatrix[],
    reference: ReferenceBlocks,
    withDefect = false,
  ): { value: number; gradients: ComplexMatrix[]; gradientReference: ComplexMatrix[][]; terms: SandwichedBranchTerm[]; quasiEntropy: number } {
    const beta = sandwichedOrder(this.request.alpha);
    const betaMinusOne = withDefect ? sandwichedOrderDefect(this.request.alpha) : undefined;
    const terms = this.supports.map((support, c) =>
      sandwichedBranchTerm(scale(states[c], this.weights[c]), support, reference[c], beta, undefined, betaMinusOne),
    );
    const total = terms.reduce((s, t) => s + t.quasiEntropy, 0);
    const coefficient = logCoefficient(this.request);
    const factor = coefficient / (total * Math.LN2);
    return {
      value: coefficient * Math.log2(total),
      gradients: terms.map((t, c) => scale(t.gradientState, factor * this.weights[c])),
      gradientReference: terms.map((t) => t.gradientReference.map((g) => scale(g, factor))),
      terms,
      quasiEntropy: total,
    };
  }

  evaluateAtReference(rho: ComplexMatrix, reference: ReferenceBlocks): JointEvaluation {
    if (this.request.kind !== 'sandwiched-up') throw new Error('evaluateAtReference: only for sandwiched-up');
    resetConditioning();
    const joint = this.fromOutputsAtReference(this.branchOutputs(rho), reference, true);
    return {
      value: joint.value,
      gradientState: this.pullBack(joint.gradients),
      gradientReference: joint.gradientReference,
      conditioning: readConditioning(),
      derivedConditioning: readDerivedConditioning(),
      split: this.identitySplit(joint.terms, joint.quasiEntropy),
    };
  }

  /**
   * ∇_ρF = a·Σ_c Σ_j K†(w_c(1 + G'_c))K with a = c·β/(Q·ln 2) and G'_c = ∇_X Q̃/β − 1 (sandwiched-up.ts), so
   * ∇_ρF − a·1 = a·(D + Σ_c Σ_j K†H_cK), H_c = (w_c − 1)·1 + w_c·G'_c, D = Σ K†K − 1: nothing of size |a| is subtracted.
   */
  private identitySplit(terms: readonly SandwichedBranchTerm[], quasiEntropy: number): IdentitySplit {
    const coefficient = logCoefficient(this.request);
    const betaMinusOne = sandwichedOrderDefect(this.request.alpha);
    const a = (coefficient * (1 + betaMinusOne)) / (quasiEntropy * Math.LN2);
    // |a| ≈ |c|/ln 2 at every ρ, so whether D needs compensated sums is decided once, from c.
    this.defect ??= identityDefect(
      this.supports.flatMap((s) => s.krausOperators),
      this.dimension,
      coefficient / Math.LN2,
      DEFECT_COMPENSATION_THRESHOLD,
    );
    const perBranch = terms.map((t, c) => {
      const h = scale(t.gradientStateDefect as ComplexMatrix, this.weights[c]);
      for (let i = 0; i < h.rows; i++) h.re[i * h.cols + i] += this.weightsMinusOne[c];
      return h;
    });
    const inner = this.pullBack(perBranch);
    addScaledInPlace(inner, this.defect.matrix, 1);
    const q = quasiEntropy - 1;
    return {
      identityCoefficient: a,
      remainder: scale(inner, a),
      constant: (coefficient / Math.LN2) * (Math.log1p(q) - q / quasiEntropy) + 1 / (quasiEntropy * Math.LN2),
      constantSensitivity: Math.abs(coefficient * q - 1) / (quasiEntropy * Math.LN2),
      defectError: Math.abs(a) * this.defect.roundingBound,
    };
  }

  outputCurvature(rho: ComplexMatrix, reference?: ReferenceBlocks): OutputCurvature | null {
    if (this.request.kind === 'sandwiched-up' && !reference) throw new Error('outputCurvature: sandwiched-up needs τ');
    const gradientsAt = (states: readonly ComplexMatrix[]) =>
      reference && this.request.kind === 'sandwiched-up'
        ? this.fromOutputsAtReference(states, reference).gradients
        : (this.fromOutputs(states, true).gradients as ComplexMatrix[]);
    resetConditioning();
    const states = this.branchOutputs(rho);
    const base = gradientsAt(states);
    const floor = readOutputFloor();
    const krausWeights = this.supports.map((s) => s.krausOperators.reduce((w, k) => w + frobeniusNorm(k) ** 2, 0));
    // A step that keeps every output positive definite: ‖Σ_j K B K†‖ ≤ Σ_j ‖K_j‖_F² for ‖B‖_F = 1 (τ weights scale X_c).
    const stretch = Math.max(1, ...krausWeights) * Math.max(1, ...this.weights);
    const step = (CURVATURE_STEP_SHARE * floor) / stretch;
    if (!(step > 0 && Number.isFinite(step))) return null;
    const rhoNorm = frobeniusNorm(rho);
    return {
      sizes: states.map((x, c) => frobeniusNorm(x) + rhoNorm * krausWeights[c]),
      measure: (direction) => {
        const moved = this.branchOutputs(direction).map((change, c) => {
          const out = states[c].clone();
          addScaledInPlace(out, change, step);
          return out;
        });
        return gradientsAt(moved).map((g, c) => frobeniusNorm(subtract(g, base[c])) / step);
      },
    };
  }
}
