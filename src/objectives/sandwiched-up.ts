import {
  addScaledInPlace,
  ComplexMatrix,
  hermitianPart,
  hermitianSum,
  multiply,
  scale,
  scaleInPlace,
  traceProductReal,
} from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh, type HermitianEigen } from '../linear-algebra/eigen.js';
import { spectralFunction } from '../linear-algebra/matrix-functions.js';
import { isKeyless, type BranchSupport } from './branch-supports.js';
import {
  blockFrechetParts,
  blockSpectralFunction,
  eigenBlocks,
  outputRoot,
  pinchedBlocks,
  powerFunction,
  sandwichedPowerOfRoot,
  type OutputRoot,
} from './spectral-blocks.js';

/**
 * τ on the pinched supports: one Hermitian block per key block, per branch ([branch][block]). A branch without key
 * (a single key block) carries a 1×1 block: its weight t_c, with τ_c = t_c·X_c/Tr X_c implied — for a fixed weight
 * that is the optimal τ_c (D̃_β(X‖τ) ≥ 0 with equality at τ ∝ X), so nothing is lost, and the branch term
 * t^{1−β}·(Tr X)^β is exact instead of going through M = X^{1/β} with its conditioning raised to the power 1/β.
 */
export type ReferenceBlocks = ComplexMatrix[][];

export interface SandwichedBranchTerm {
  readonly quasiEntropy: number;
  /** ∇_X Q̃_β(X‖τ) = τ^s W τ^s (with respect to the weighted branch output); shared, so callers do not write to it. */
  readonly gradientState: ComplexMatrix;
  /** Pinched ∇_τ Q̃_β(X‖τ), block by block. */
  readonly gradientReference: ComplexMatrix[];
  /** Z(M^β): the fixed-point map's image before normalisation. */
  readonly pinchedPower: ComplexMatrix[];
  /** The eigendecompositions of τ's blocks this term was formed from (absent for a branch without key). */
  readonly referenceEigen?: HermitianEigen[];
  /** M = τ^s X τ^s has an eigenvalue at 0 (X or τ singular to rounding): the inner loop stops before such a τ. */
  readonly singular?: boolean;
  /**
   * ∇_X Q̃/β − 1 = (τ^{2s} − 1) + τ^s·(M^{β−1} − 1)·τ^s, each difference through expm1 of a logarithm, so it is
   * accurate relative to its own size (it vanishes as α → 1, where ∇_X Q̃ → 1). Only when asked for.
   */
  gradientStateDefect?: ComplexMatrix;
}

/**
 * Q̃_β(X‖τ) = Tr[(τ^s X τ^s)^β], s = (1−β)/(2β), and both partial gradients, for one branch. `root` is X's
 * square-root factor when the caller already has it (the inner maximisation evaluates many τ at one X).
 */
export function sandwichedBranchTerm(
  weightedState: ComplexMatrix,
  support: BranchSupport,
  reference: ComplexMatrix[],
  beta: number,
  root?: OutputRoot,
  /** β − 1 formed from α without rounding β first (`sandwichedOrderDefect`): asks for `gradientStateDefect`. */
  betaMinusOne?: number,
): SandwichedBranchTerm {
  if (isKeyless(support)) return keylessBranchTerm(weightedState, reference[0].re[0], beta, betaMinusOne);
  const s = (1 - beta) / (2 * beta);
  const { blockSizes: sizes, blockOffsets: offsets } = support;
  const referenceEigs = eigenBlocks(reference);
  const ts = blockSpectralFunction(referenceEigs, (t) => Math.max(t, 0) ** s);
  const power = sandwichedPowerOfRoot(ts, root ?? outputRoot(weightedState, support.outputRange), beta, betaMinusOne);
  const { quasiEntropy, weight, powerOfM } = power;
  const direction = hermitianSum(multiply(multiply(weightedState, ts), weight));
  const term = new FormedBranchTerm(
    quasiEntropy,
    ts,
    weight,
    blockFrechetParts(referenceEigs, powerFunction(s), direction, sizes, offsets),
    pinchedBlocks(powerOfM, sizes, offsets),
    referenceEigs,
    power.singular,
  );
  if (betaMinusOne === undefined || !power.weightDefect) return term;
  // 2s = (1 − β)/β with 1 − β = −(β − 1) exact.
  const twoS = -betaMinusOne / (1 + betaMinusOne);
  const defect = blockSpectralFunction(referenceEigs, (t) => Math.expm1(twoS * Math.log(t)));
  addScaledInPlace(defect, multiply(multiply(ts, power.weightDefect), ts), 1);
  term.gradientStateDefect = defect;
  return term;
}

/**
 * A branch term whose ∇_X Q̃ = τ^s·W·τ^s is formed on first use: the inner loop needs only ∇_τ Q̃ and the map's
 * image at each τ, and ∇_X Q̃ only at the τ it returns (two d×d products per branch and inner step saved).
 */
class FormedBranchTerm implements SandwichedBranchTerm {
  private formedGradientState: ComplexMatrix | undefined;
  gradientStateDefect?: ComplexMatrix;

  constructor(
    readonly quasiEntropy: number,
    private readonly ts: ComplexMatrix,
    private readonly weight: ComplexMatrix,
    readonly gradientReference: ComplexMatrix[],
    readonly pinchedPower: ComplexMatrix[],
    readonly referenceEigen: HermitianEigen[],
    readonly singular: boolean,
  ) {}

  get gradientState(): ComplexMatrix {
    this.formedGradientState ??= multiply(multiply(this.ts, this.weight), this.ts);
    return this.formedGradientState;
  }
}

/** Q = t^{1−β}·(Tr X)^β with ∂_X Q = β·t^{1−β}(Tr X)^{β−1}·1 and ∂_t Q = (1−β)·t^{−β}(Tr X)^β. */
function keylessBranchTerm(weightedState: ComplexMatrix, weight: number, beta: number, betaMinusOne?: number): SandwichedBranchTerm {
  let traceX = 0;
  for (let i = 0; i < weightedState.rows; i++) traceX += weightedState.re[i * weightedState.cols + i];
  const quasiEntropy = weight ** (1 - beta) * traceX ** beta;
  const oneByOne = (value: number) => ComplexMatrix.from([[value]]);
  const identity = ComplexMatrix.identity(weightedState.rows);
  return {
    quasiEntropy,
    gradientState: scale(identity, beta * weight ** (1 - beta) * traceX ** (beta - 1)),
    gradientReference: [oneByOne((1 - beta) * weight ** -beta * traceX ** beta)],
    // The fixed-point map sends the weight to this branch's share of Q.
    pinchedPower: [oneByOne(quasiEntropy)],
    // ∂_X Q/β − 1 = (t/Tr X)^{1−β} − 1.
    ...(betaMinusOne === undefined
      ? {}
      : { gradientStateDefect: scale(identity, Math.expm1(-betaMinusOne * Math.log(weight / traceX))) }),
  };
}

/** The starting τ: the pinched outputs (Tr X for a branch without key), normalised together. */
function initialReference(weightedStates: readonly ComplexMatrix[], supports: readonly BranchSupport[]): ReferenceBlocks {
  return normalise(
    supports.map((sup, c) => {
      const blocks = pinchedBlocks(weightedStates[c], sup.blockSizes, sup.blockOffsets);
      if (!isKeyless(sup)) return blocks;
      let traceX = 0;
      for (let i = 0; i < blocks[0].rows; i++) traceX += blocks[0].re[i * blocks[0].cols + i];
      return [ComplexMatrix.from([[traceX]])];
    }),
  );
}

export interface ReferenceOptimum {
  reference: ReferenceBlocks;
  terms: SandwichedBranchTerm[];
  quasiEntropy: number;
  /** Certified bound on max_τ Q − Q(τ) from concavity: max_blocks λ_max(∇_τQ) − ⟨∇_τQ, τ⟩. */
  innerGap: number;
  iterations: number;
}

export interface ReferenceSettings {
  /** Stop when innerGap ≤ relativeTolerance·Q. */
  relativeTolerance: number;
  maxIterations: number;
  /**
   * While innerGap > stagnationAllowance·Q, stagnation stops the loop only after LONG_STAGNATION_WINDOW iterations
   * without halving: the caller needs that accuracy, and a slow map is not yet at its floor. Absent: no such demand.
   */
  stagnationAllowance?: number;
}

/**
 * The inner loop stops when its gap has not halved (STAGNATION_FACTOR) within STAGNATION_WINDOW iterations: the plain
 * map shrinks the gap by 1−β ≤ 1/3 per iteration on trusted CHSH and by at most 0.56 on random three-branch
 * instruments (measured, docs/convergence.md), so three iterations without halving usually mean the rounding floor of
 * ∇_τQ — but not always (d8#15), hence the longer window where the caller needs the accuracy (`stagnationAllowance`).
 */
const STAGNATION_FACTOR = 0.5;
const STAGNATION_WINDOW = 3;
/** Where the caller needs a smaller gap (d8#15 of the random suite stopped at 3e-4·Q after three; docs/convergence.md). */
const LONG_STAGNATION_WINDOW = 12;

export const DEFAULT_REFERENCE_SETTINGS: ReferenceSettings = { relativeTolerance: 1e-10, maxIterations: 2000 };

/**
 * The inner tolerance for Rényi order α: its error reaches F multiplied by (2α−1)/((α−1)·ln 2), so below α = 1.5 the
 * tolerance shrinks with (α−1)/(2α−1) to keep F's share of it at the α = 1.5 level (≈ 6e-10; docs/convergence.md).
 */
export function referenceSettingsFor(alpha: number): ReferenceSettings {
  const amplificationAt15 = 0.5 / 2;
  const share = Math.min(1, (alpha - 1) / (2 * alpha - 1) / amplificationAt15);
  return { ...DEFAULT_REFERENCE_SETTINGS, relativeTolerance: DEFAULT_REFERENCE_SETTINGS.relativeTolerance * share };
}

/** Σ_c ⟨∇_τ Q_c, τ_c⟩ and the largest eigenvalue over all blocks of ∇_τ Q. */
export function referenceGradientSummary(
  terms: readonly SandwichedBranchTerm[],
  reference: ReferenceBlocks,
): { innerProduct: number; largestEigenvalue: number; smallestEigenvalue: number } {
  let innerProduct = 0;
  let largestEigenvalue = -Infinity;
  let smallestEigenvalue = Infinity;
  terms.forEach((term, c) => {
    term.gradientReference.forEach((g, k) => {
      innerProduct += traceProductReal(g, reference[c][k]);
      const values = eigvalsh(g);
      largestEigenvalue = Math.max(largestEigenvalue, values[values.length - 1]);
      smallestEigenvalue = Math.min(smallestEigenvalue, values[0]);
    });
  });
  return { innerProduct, largestEigenvalue, smallestEigenvalue };
}

interface InnerPoint {
  reference: ReferenceBlocks;
  terms: SandwichedBranchTerm[];
  quasiEntropy: number;
  innerGap: number;
}

function innerPoint(
  weightedStates: readonly ComplexMatrix[],
  supports: readonly BranchSupport[],
  roots: readonly (OutputRoot | undefined)[],
  reference: ReferenceBlocks,
  beta: number,
): InnerPoint {
  const terms = supports.map((sup, c) => sandwichedBranchTerm(weightedStates[c], sup, reference[c], beta, roots[c]));
  const quasiEntropy = terms.reduce((s, t) => s + t.quasiEntropy, 0);
  const summary = referenceGradientSummary(terms, reference);
  return { reference, terms, quasiEntropy, innerGap: Math.max(0, summary.largestEigenvalue - summary.innerProduct) };
}

/**
 * The fixed-point step extrapolated in log coordinates: log τ' = (log T − (1−β)·log τ)/β block by block, T the
 * map's image of τ, then normalised. Where τ commutes with X, T ∝ τ^{1−β}·Z(X^β), so τ' is the fixed point
 * Z(X^β)^{1/β} up to normalisation; in general the plain map contracts by about 1−β near its fixed point
 * (docs/convergence.md) and this removes that mode. Null when a block of T is not positive definite.
 */
export function extrapolatedReference(
  reference: ReferenceBlocks,
  mapped: ReferenceBlocks,
  beta: number,
  /** τ's blocks already decomposed (per branch, where the caller has them): eigh is deterministic, so reused. */
  referenceEigen: readonly (readonly HermitianEigen[] | undefined)[] = [],
): ReferenceBlocks | null {
  const exponents: HermitianEigen[][] = [];
  let top = -Infinity;
  for (let c = 0; c < reference.length; c++) {
    const branch: HermitianEigen[] = [];
    for (let k = 0; k < reference[c].length; k++) {
      const image = eigh(mapped[c][k]);
      const current = referenceEigen[c]?.[k] ?? eigh(reference[c][k]);
      if (!(image.values[0] > 0 && current.values[0] > 0)) return null;
      const exponent = scaleInPlace(spectralFunction(image, Math.log), 1 / beta);
      addScaledInPlace(exponent, spectralFunction(current, Math.log), -(1 - beta) / beta);
      const e = eigh(hermitianPart(exponent));
      top = Math.max(top, e.values[e.values.length - 1]);
      branch.push(e);
    }
    exponents.push(branch);
  }
  if (!Number.isFinite(top)) return null;
  // One shift for every block keeps exp finite and their ratios intact; the normalisation absorbs it.
  return normalise(exponents.map((branch) => branch.map((e) => spectralFunction(e, (v) => Math.exp(v - top)))));
}

/**
 * max over key-block-diagonal density operators τ of Σ_c Q̃_β(X'_c‖τ_c), by the fixed-point map
 * τ ← Z(M^β)/Tr M^β, M = τ^s X' τ^s. Its fixed points are exactly the stationary points
 * (Z(X^{1/2}N^{β−1}X^{1/2}) ∝ τ^{1−2s}), hence the maximum by concavity (Frank & Lieb 2013). Each step is first tried
 * extrapolated (`extrapolatedReference`) and kept when it lowers the certified inner gap; otherwise the plain step is
 * taken and the loop stays plain. Either way the returned τ is one whose gap was computed, so the value and the gap
 * it states are those of that τ. A warm start that does not already meet the tolerance competes with the pinched
 * outputs, the larger Q starting the loop (`startingPoint`); a start that is not warm is taken as given.
 */
export function optimalReference(
  weightedStates: readonly ComplexMatrix[],
  supports: readonly BranchSupport[],
  beta: number,
  settings: ReferenceSettings = DEFAULT_REFERENCE_SETTINGS,
  start?: ReferenceBlocks,
  /** `start` is the optimum at another state (a warm start): the pinched outputs compete with it (`startingPoint`). */
  warm = false,
): ReferenceOptimum {
  // X's square-root factors do not depend on τ: one eigendecomposition per branch for the whole loop.
  const roots = supports.map((sup, c) => (isKeyless(sup) ? undefined : outputRoot(weightedStates[c], sup.outputRange)));
  const at = (reference: ReferenceBlocks) => innerPoint(weightedStates, supports, roots, reference, beta);
  const pinched = () => initialReference(weightedStates, supports);
  let point = start === undefined ? at(pinched()) : warm ? startingPoint(at, start, pinched, settings.relativeTolerance) : at(start);
  let iterations = 0;
  let bestGap = Infinity;
  let bestGapIteration = 0;
  let extrapolate = true;
  for (;;) {
    if (point.innerGap < STAGNATION_FACTOR * bestGap) {
      bestGap = point.innerGap;
      bestGapIteration = iterations;
    }
    // Past the rounding floor the gap stops shrinking; iterating further cannot help.
    const needed = settings.stagnationAllowance !== undefined && point.innerGap > settings.stagnationAllowance * point.quasiEntropy;
    const stagnated = iterations - bestGapIteration >= (needed ? LONG_STAGNATION_WINDOW : STAGNATION_WINDOW);
    if (point.innerGap <= settings.relativeTolerance * point.quasiEntropy || iterations >= settings.maxIterations || stagnated) {
      return { ...point, iterations };
    }
    const mapped = point.terms.map((t) => t.pinchedPower.map((b) => scale(b, 1 / point.quasiEntropy)));
    let next: InnerPoint | null = null;
    if (extrapolate) {
      const candidate = extrapolatedReference(point.reference, mapped, beta, point.terms.map((t) => t.referenceEigen));
      const tried = candidate && atIfRegular(at, candidate);
      if (tried && tried.innerGap < point.innerGap) next = tried;
      else extrapolate = false;
    }
    next ??= atIfRegular(at, mapped);
    // The map's image singular to rounding: the current τ, whose gap was computed, is the answer.
    if (next === null) return { ...point, iterations };
    point = next;
    iterations++;
  }
}

/**
 * A warm start τ (another state's optimum) unless it is short of the tolerance and the pinched outputs give a larger
 * Q. Near a state where the key is known (X_c nearly block diagonal, small eigenvalues ~1e-10) the pinched outputs
 * are almost optimal (τ = X/Tr X is optimal for X = Z(X)), while from the τ of a distant ρ the map crawls and its gap
 * is rounding-dominated (∂τ^s amplifies by τ^{s−1}), so the stagnation rule stopped it with F too high by up to 1e-2
 * (docs/objectives.md, "A warm start from a distant state").
 */
function startingPoint(
  at: (reference: ReferenceBlocks) => InnerPoint,
  warmStart: ReferenceBlocks,
  pinched: () => ReferenceBlocks,
  relativeTolerance: number,
): InnerPoint {
  const warm = at(warmStart);
  if (warm.innerGap <= relativeTolerance * warm.quasiEntropy) return warm;
  const cold = atIfRegular(at, pinched());
  return cold !== null && cold.quasiEntropy > warm.quasiEntropy ? cold : warm;
}

/**
 * The inner point at τ, or null when it is singular to rounding: M = τ^s X τ^s with an eigenvalue at 0, or ∇_τQ
 * with non-finite entries (∂τ^s grows like τ^{s−1}), which the eigensolver refuses with a RangeError.
 */
function atIfRegular(at: (reference: ReferenceBlocks) => InnerPoint, reference: ReferenceBlocks): InnerPoint | null {
  let point: InnerPoint;
  try {
    point = at(reference);
  } catch (error) {
    if (error instanceof RangeError) return null;
    throw error;
  }
  // M singular to rounding: before the gradients took their weights on M's support this showed as a NaN.
  return point.terms.some((t) => t.singular) ? null : point;
}

/** Scales the blocks to unit total trace in place: its callers pass blocks they have just formed. */
function normalise(blocks: ReferenceBlocks): ReferenceBlocks {
  let total = 0;
  for (const branch of blocks) for (const b of branch) for (let i = 0; i < b.rows; i++) total += b.re[i * b.cols + i];
  for (const branch of blocks) for (const b of branch) scaleInPlace(b, 1 / total);
  return blocks;
}
