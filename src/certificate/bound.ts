import {
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  directSum,
  frobeniusNorm,
  hermiticityDefect,
} from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { largestDimension, type Objective, type ObjectiveEvaluation, type ReferenceBlocks, type BranchSupport, type IdentitySplit } from '../objectives/index.js';
import type { Problem } from '../problem/model.js';
import { compressToFace, faceContinuityMargin, type FeasibleFace } from '../problem/feasible-face.js';
import { matrixFromJson } from '../problem/json.js';
import { liftedFaceBound, type LiftedPointTerms } from './lifted-face.js';
import { dualPart, eulerInnerProduct, referenceTerm as referenceTermOf } from './dual-term.js';
import type { BoundBreakdown } from './breakdown.js';
import type { Certificate } from '../result/types.js';
import { pinchedBlocks } from '../objectives/spectral-blocks.js';
import { isKeyless } from '../objectives/branch-supports.js';
import { vonNeumannLeadingCharges } from './face-block-charge.js';

// The margin uses the eigensolver backward-error scale c·n·u·‖A‖_F (docs/math.md §5).
import { BACKWARD_ERROR_CONSTANT as MARGIN_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

export type { BoundBreakdown } from './breakdown.js';
export { eulerInnerProduct } from './dual-term.js';

/**
 * The certified lower bound from a full-rank linearization point on the feasible face (docs/math.md §5 restated in
 * the README). Valid for any multipliers y⁺, y⁻ ≥ 0 and any full-rank ρ' by convexity and weak duality.
 */
export function linearizationBound(
  restricted: Problem,
  objective: Objective,
  rho: ComplexMatrix,
  multipliersLower: ArrayLike<number>,
  multipliersUpper: ArrayLike<number>,
  reference?: ReferenceBlocks,
  /** F and ∇F at ρ' when the caller already has them (not for sandwiched-up, whose bound needs ∇_τ too). */
  precomputed?: ObjectiveEvaluation,
  /** The solver's shortcut: skip measuring the curvature when even a zero conditioning charge would not beat this. */
  curvatureWorthAbove = -Infinity,
  /** Polled before each gradient evaluation of the curvature (the solver's time limit and cancellation). */
  checkpoint: () => void = () => {},
  /** The certificate's requested gap: the curvature clusters stop growing once their charge is far below it. */
  gapTolerance = 0,
): BoundBreakdown {
  const n = rho.rows;
  let objectiveValue: number;
  let gradient: ComplexMatrix;
  let referenceTerm = 0;
  let referenceError = 0;
  let evaluationConditioning = 1;
  let derivedConditioning: number | undefined;
  let split: IdentitySplit | undefined;
  if (objective.request.kind === 'sandwiched-up') {
    if (!reference) throw new Error('linearizationBound: sandwiched-up needs reference states τ');
    const joint = objective.evaluateAtReference(rho, reference);
    objectiveValue = joint.value;
    // ∇F = a·1 + G: λ_min(∇F − Σ yΓ) = a + λ_min(G − Σ yΓ), and a enters only through the split's constant.
    split = joint.split;
    gradient = split.remainder;
    evaluationConditioning = joint.conditioning;
    derivedConditioning = joint.derivedConditioning;
    // −⟨∇_τF, τ'⟩ is carried by the joint Euler term below.
    ({ smallest: referenceTerm, error: referenceError } = referenceTermOf(joint.gradientReference));
  } else {
    const evaluation = precomputed?.gradient ? precomputed : objective.evaluate(rho, { withGradient: true, assumeFullRank: true });
    objectiveValue = evaluation.value;
    gradient = evaluation.gradient as ComplexMatrix;
    evaluationConditioning = evaluation.conditioning ?? 1;
    derivedConditioning = evaluation.derivedConditioning;
  }
  const { shifted, dualConstant, statisticalSlack, multiplierWeight } = dualPart(restricted, gradient, multipliersLower, multipliersUpper);
  const spectrum = eigh(shifted);
  const gradientInnerProduct = eulerInnerProduct(objective, objectiveValue);
  // The stated λ_min(∇F − Σ yΓ) keeps its meaning; the bound itself adds the split's parts without cancellation.
  const smallestEigenvalue = spectrum.values[0] + (split ? split.identityCoefficient : 0);
  const linearizationConstant = split ? split.constant : objectiveValue - gradientInnerProduct;

  // Backward-error scale of each eigendecomposition; the gradient term grows like ‖ρ'‖/λ_min(ρ') because the
  // derivative of log or of a negative power amplifies a backward error by the inverse smallest eigenvalue. The
  // gradient enters once (through λ_min): its pairing with ρ' is the exact Euler value, and F itself only for
  // the Rényi kinds (for von Neumann F(ρ') − ⟨∇F, ρ'⟩ = 0 exactly).
  const rhoEigenvalues = eigvalsh(rho);
  // The worst of ρ' itself and every positive matrix the objective took a function of (branch outputs, pinched
  // blocks, sandwiched products): Kraus maps can make an output worse conditioned than ρ'.
  const conditioning = Math.max(frobeniusNorm(rho) / Math.max(rhoEigenvalues[0], Number.MIN_VALUE), evaluationConditioning);
  const scale = MARGIN_CONSTANT * n * UNIT_ROUNDOFF;
  // Split: the constant's own size and what Q's relative error does to it, plus the identity defect's rounding.
  const valueError = split
    ? Math.abs(split.constant) + split.constantSensitivity
    : objective.request.kind === 'von-neumann'
      ? 0
      : Math.abs(objectiveValue);
  const unamplified =
    scale * (valueError + frobeniusNorm(shifted) + multiplierWeight + frobeniusNorm(gradient)) + referenceError + (split?.defectError ?? 0);
  const weyl = (scale * conditioning) / Math.LN2;
  // Graded alternative: the matrices other than ρ' and the branch outputs keep their full (Weyl) charge; the
  // outputs' share is measured where it reaches λ_min.
  const derived = derivedConditioning === undefined ? conditioning : derivedConditioning;
  const derivedCharge = (scale * derived) / Math.LN2;
  let conditioningCharge = weyl;
  let margin = unamplified + weyl;
  const base = linearizationConstant + dualConstant + spectrum.values[0] + referenceTerm;
  // von Neumann: the closed form over outputs and pinched blocks alike (no evaluations, any cluster size); its derived
  // ledger holds only the pinched blocks, so no separate derived charge remains.
  if (objective.request.kind === 'von-neumann' && n <= CLOSED_FORM_MAX_DIMENSION && weyl > unamplified && base - unamplified > curvatureWorthAbove) {
    const clustered = clusterSplitCharge(objective, rho, spectrum, weyl + derivedCharge, scale);
    if (clustered < conditioningCharge) {
      conditioningCharge = clustered;
      margin = unamplified + clustered;
    }
  }
  if (conditioningCharge > derivedCharge + unamplified && base - unamplified - derivedCharge > curvatureWorthAbove) {
    const graded =
      derivedCharge +
      curvatureCharge(objective, rho, reference, spectrum, weyl, scale, checkpoint, conditioningCharge - derivedCharge, CURVATURE_ENOUGH_SHARE * gapTolerance);
    if (graded < conditioningCharge) {
      conditioningCharge = graded;
      margin = unamplified + graded;
    }
  }
  const lowerBound = base - margin;
  return {
    objectiveValue,
    gradientInnerProduct,
    dualConstant,
    smallestEigenvalue,
    referenceTerm,
    margin,
    conditioningCharge,
    lowerBound,
    statisticalSlack,
  };
}

/** τ_c on H_c (block diagonal in the key map) → blocks on the branch's pinched support; a keyless branch stores its weight as a 1×1 matrix. */
export function referenceToSupport(support: BranchSupport, referenceOnOutput: ComplexMatrix): ComplexMatrix[] {
  if (isKeyless(support)) {
    if (referenceOnOutput.rows !== 1 || referenceOnOutput.cols !== 1) {
      throw new RangeError(`a branch without key stores its weight as a 1x1 reference state`);
    }
    return [referenceOnOutput];
  }
  const compressed = conjugateAdjoint(support.basis, referenceOnOutput);
  return pinchedBlocks(compressed, support.blockSizes, support.blockOffsets);
}

/** Blocks on the pinched support → τ_c on H_c (the 1×1 weight itself for a branch without key). */
export function referenceFromSupport(support: BranchSupport, blocks: ComplexMatrix[]): ComplexMatrix {
  if (isKeyless(support)) return blocks[0];
  return conjugate(support.basis, directSum(blocks));
}

/** The stored linearization point on the face and, for sandwiched-up, the stored τ on the supports. */
export interface StoredLinearization {
  state: ComplexMatrix;
  reference?: ReferenceBlocks;
}

/** Hermiticity accepted for a stored linearization point (it went through JSON with full precision). */
const STATE_HERMITICITY_TOLERANCE = 1e-12;

/** Reads a certificate's stored matrices; throws RangeError with the reason when one is malformed. */
export function readStoredLinearization(
  face: FeasibleFace,
  objective: Objective,
  certificate: Pick<Certificate, 'linearizationState' | 'referenceStates' | 'linearizationOffFace'>,
): StoredLinearization {
  const stored = matrixFromJson(certificate.linearizationState, 'certificate.linearizationState');
  const d = face.isometry ? face.isometry.rows : face.dimension;
  if (stored.rows !== d || stored.cols !== d) throw new RangeError(`linearization state must be ${d}x${d}`);
  if (hermiticityDefect(stored) > STATE_HERMITICITY_TOLERANCE) throw new RangeError('linearization state is not Hermitian');
  // A lifted point is used as stored, on the whole space (docs/faces.md, "The lifted linearization bound").
  const state = certificate.linearizationOffFace ? stored : compressToFace(face, stored);
  const references = certificate.referenceStates;
  const reference =
    objective.request.kind === 'sandwiched-up' && references
      ? objective.supports.map((support, c) =>
          referenceToSupport(support, matrixFromJson(references[c], `certificate.referenceStates[${c}]`)),
        )
      : undefined;
  return { state, reference };
}

/**
 * The bound exactly as a verifier recomputes it from a certificate's stored numbers (compressing the stored state
 * onto the face, converting stored τ to the supports); the solver claims this very number, so a re-check on the
 * same platform reproduces it bit for bit.
 */
export function certificateBreakdown(
  face: FeasibleFace,
  restricted: Problem,
  objective: Objective,
  certificate: Pick<Certificate, 'linearizationState' | 'referenceStates' | 'multipliersLower' | 'multipliersUpper' | 'linearizationOffFace'> & {
    settings?: Certificate['settings'];
  },
  stored?: StoredLinearization,
  /** The problem and objective on the whole space, for a lifted point (`linearizationOffFace`). */
  whole?: { problem: Problem; objective: Objective },
  /** The lifted point's terms, when the caller formed them from this very `stored` point. */
  liftedTerms?: LiftedPointTerms,
): BoundBreakdown {
  if (certificate.linearizationOffFace) {
    if (!whole) throw new Error('certificateBreakdown: a lifted point needs the whole-space problem');
    // τ' of a lifted point lives on the whole space's output supports.
    const lifted = stored ?? readStoredLinearization(face, whole.objective, certificate);
    const { multipliersLower, multipliersUpper } = certificate;
    return liftedFaceBound(face, whole.problem, whole.objective, lifted.state, multipliersLower, multipliersUpper, lifted.reference, liftedTerms);
  }
  const read = stored ?? readStoredLinearization(face, objective, certificate);
  const breakdown = linearizationBound(
    restricted,
    objective,
    read.state,
    certificate.multipliersLower,
    certificate.multipliersUpper,
    read.reference,
    undefined,
    undefined,
    undefined,
    certificate.settings?.gapTolerance ?? 0,
  );
  // On an exposed face: the continuity margin for feasible states off the face (docs/faces.md).
  const faceMargin = faceContinuityMargin(
    face,
    restricted,
    objective.request.kind,
    certificate.multipliersLower,
    certificate.multipliersUpper,
    breakdown.lowerBound,
  );
  if (faceMargin === 0) return breakdown;
  return { ...breakdown, margin: breakdown.margin + faceMargin, lowerBound: breakdown.lowerBound - faceMargin };
}


/**
 * Largest n for which the closed-form split is computed: its products K_j·V cost about two evaluations (53 ms at
 * n = 128, 112 ms at n = 256), and result assembly, which runs it, is not interruptible (a cancelled d = 256 solve
 * must free its thread within a second).
 */
const CLOSED_FORM_MAX_DIMENSION = 128;

/**
 * Share of the certificate's requested gap at which a curvature charge is enough (derived from the stored settings, so
 * `verify` stops where the solver did): on bb84-prepare-measure η = 0.1 sandwiched-up the clusters grew to 8
 * eigenvectors for a charge already far below 1e-6, 1.5 ms of its 4 ms (measured 2026-12-03).
 */
export const CURVATURE_ENOUGH_SHARE = 1e-3;

/**
 * Largest cluster of smallest eigenvectors of ∇F − Σ yΓ whose curvature is measured (k² difference quotients, each
 * a gradient evaluation): 8 while ρ and every branch output have dimension at most 32 (d32#3 Petz-up: S's gap opens
 * at k = 5–6, and with 4 the margin was the Weyl charge, 1.3e-5 against 7.3e-7; 120 ms there), 4 otherwise, where
 * result assembly, which cannot be interrupted, would spend seconds on it (a small face of a large space keeps
 * large outputs).
 */
function curvatureClusterLimit(objective: Objective): number {
  return largestDimension(objective) <= 32 ? 8 : 4;
}

/**
 * The branch outputs' share of the error of λ_min(S), S = ∇F − Σ yΓ, when it is smaller than the Weyl charge ε
 * (docs/convergence.md, "Where the conditioning reaches the bound"). W = the k smallest eigenvectors of the
 * computed S, gap g = σ_k − σ_0. In blocks over (W, W^⊥) with the error E: λ_min(S) ≥ σ_0 − η when
 * η = a + b²/(g − b + a), with a ≥ ‖E_WW‖ and b ≥ ‖E‖ (Schur complement; needs g > b). The errors come from
 * backward errors Δ_c of the outputs (‖Δ_c‖_F ≤ scale·size_c), so ‖E_WW‖ ≤ √2·scale·Σ_c size_c·‖H_c|_W‖ with
 * ‖H_c|_W‖ the Frobenius norm of the curvature over an orthonormal Hermitian basis of operators on W. Clusters grow
 * from k = 1 and stop at the first whose gap term no longer dominates (deterministic, so a verifier repeats it).
 */
function curvatureCharge(
  objective: Objective,
  rho: ComplexMatrix,
  reference: ReferenceBlocks | undefined,
  spectrum: { values: Float64Array; vectors: ComplexMatrix },
  weyl: number,
  scale: number,
  checkpoint: () => void,
  /** A charge already established, at most the Weyl charge (the closed form below): returned when the curvature does no better. */
  ceiling = weyl,
  /** A charge this small ends the growth: larger clusters cost evaluations for nothing the request can see. */
  enough = 0,
): number {
  const { values, vectors } = spectrum;
  const clusters = Math.min(values.length - 1, curvatureClusterLimit(objective));
  let best = ceiling;
  if (best <= enough) return best;
  let curvature: ReturnType<Objective['outputCurvature']> | undefined;
  let squares: number[] = [];
  for (let k = 1; k <= clusters; k++) {
    if (curvature === undefined) {
      // Only worth measuring once some cluster is separated from the rest by more than the Weyl charge.
      let separated = false;
      for (let j = k; j <= clusters; j++) separated ||= values[j] - values[0] > weyl;
      if (!separated) return best;
      checkpoint();
      curvature = objective.outputCurvature(rho, reference);
      if (!curvature) return best;
      squares = curvature.sizes.map(() => 0);
    }
    if (curvature === null) return best;
    for (const direction of clusterDirections(vectors, k - 1)) {
      checkpoint();
      curvature.measure(direction).forEach((norm, c) => (squares[c] += norm * norm));
    }
    const gap = values[k] - values[0];
    let within = 0;
    curvature.sizes.forEach((size, c) => (within += size * Math.sqrt(squares[c])));
    const a = Math.SQRT2 * scale * within;
    if (!Number.isFinite(a)) return best;
    const whole = Math.max(weyl, a);
    if (gap <= whole) continue;
    const second = (whole * whole) / (gap - whole + a);
    best = Math.min(best, a + second);
    if (second <= a || best <= enough) return best;
  }
  return best;
}

/**
 * The same Schur-complement split in closed form (von Neumann): a ≥ ‖E_WW‖ and c ≥ ‖E_⊥W‖ from Daleckii–Krein over
 * the clusters of large and small eigenvalues of each output and of its pinched blocks (`vonNeumannLeadingCharges`,
 * docs/faces.md), e ≥ ‖E_⊥⊥‖ the whole charge; then λ_min(S) ≥ σ_0 − a − c²/(g − e + a) when g > e (the 2×2 form
 * over (W, W⊥) with diagonal σ_0 − a, σ_k − e and off-diagonal c). No difference quotients are needed, so W may be
 * any number k of smallest eigenvectors of S. At an optimum of rank r on the boundary S has about r eigenvalues near
 * σ_0 (complementary slackness) and the gap opens only after them, beyond the curvature's four; the small
 * eigenvalues are then seen by W only through its small overlap with them, and by the cross block only on one side.
 * `wholeCharge` bounds ‖E‖ for every matrix together (the outputs' and the pinched blocks' Weyl charges).
 */
function clusterSplitCharge(
  objective: Objective,
  rho: ComplexMatrix,
  spectrum: { values: Float64Array; vectors: ComplexMatrix },
  wholeCharge: number,
  scale: number,
): number {
  const { values, vectors } = spectrum;
  const { within, cross } = vonNeumannLeadingCharges(objective, rho, vectors, scale);
  let best = Infinity;
  for (let k = 1; k < values.length; k++) {
    const a = within[k];
    const gap = values[k] - values[0];
    // e ≥ ‖E_⊥⊥‖ (the whole charge), c ≥ ‖E_⊥W‖ (the cross clusters, never above the whole charge).
    const e = Math.max(wholeCharge, a);
    const c = Math.min(e, cross[k]);
    if (!Number.isFinite(a) || gap <= e) continue;
    best = Math.min(best, a + (c * c) / (gap - e + a));
  }
  return best;
}

/**
 * The elements an orthonormal basis (Frobenius) of the Hermitian operators on span{w_0, …, w_j} adds to one on
 * span{w_0, …, w_{j−1}} (w_i the columns of `vectors`): w_j w_j†, and (w_i w_j† + w_j w_i†)/√2, i(w_i w_j† − w_j w_i†)/√2
 * for i < j.
 */
function clusterDirections(vectors: ComplexMatrix, j: number): ComplexMatrix[] {
  const n = vectors.rows;
  const column = (i: number) => Array.from({ length: n }, (_, r) => [vectors.re[r * vectors.cols + i], vectors.im[r * vectors.cols + i]]);
  const wj = column(j);
  const directions: ComplexMatrix[] = [];
  const diagonal = ComplexMatrix.zeros(n);
  for (let r = 0; r < n; r++) {
    for (let s = 0; s < n; s++) {
      // w_j[r]·conj(w_j[s])
      diagonal.re[r * n + s] = wj[r][0] * wj[s][0] + wj[r][1] * wj[s][1];
      diagonal.im[r * n + s] = wj[r][1] * wj[s][0] - wj[r][0] * wj[s][1];
    }
  }
  directions.push(diagonal);
  for (let i = 0; i < j; i++) {
    const wi = column(i);
    const symmetric = ComplexMatrix.zeros(n);
    const antisymmetric = ComplexMatrix.zeros(n);
    for (let r = 0; r < n; r++) {
      for (let s = 0; s < n; s++) {
        // p = w_i[r]·conj(w_j[s]); the (r, s) entries of p + conj(p at (s, r)) and of i·(p − conj(p at (s, r))).
        const pr = wi[r][0] * wj[s][0] + wi[r][1] * wj[s][1];
        const pi = wi[r][1] * wj[s][0] - wi[r][0] * wj[s][1];
        const qr = wi[s][0] * wj[r][0] + wi[s][1] * wj[r][1];
        const qi = wi[s][1] * wj[r][0] - wi[s][0] * wj[r][1];
        symmetric.re[r * n + s] = Math.SQRT1_2 * (pr + qr);
        symmetric.im[r * n + s] = Math.SQRT1_2 * (pi - qi);
        antisymmetric.re[r * n + s] = Math.SQRT1_2 * (-pi - qi);
        antisymmetric.im[r * n + s] = Math.SQRT1_2 * (pr - qr);
      }
    }
    directions.push(symmetric, antisymmetric);
  }
  return directions;
}
