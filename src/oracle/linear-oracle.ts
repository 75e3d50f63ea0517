// The semidefinite linear oracle of docs/math.md §4: min ⟨G, σ⟩ over {σ ⪰ 0, Tr σ = 1, ℓ ≤ Tr(Γσ) ≤ u},
// with dual bounds recomputed independently and Farkas certificates for infeasible constraint sets.
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { eigh, eigvalsh } from '../linear-algebra/eigen.js';
import { EqualitySpan, DEPENDENCE_TOLERANCE } from './equality-span.js';
import { InteriorPointSolver, type InteriorPointRows, type InteriorPointStatus } from './interior-point.js';
import { hermitianInner } from './kernels.js';
import { combinationRebuildsRows, commonTensorFactors, type TensorRows } from './tensor-rows.js';
import {
  checkHermitian,
  DEFAULT_ORACLE_SETTINGS,
  OracleInputError,
  resolveSettings,
  type Checkpoint,
  type InfeasibilityCertificate,
  type MinimizeOptions,
  type OracleConstraint,
  type OracleOptions,
  type OracleResult,
  type OracleSettings,
} from './types.js';

/** Primal residual norm (on unit-norm constraint rows) accepted as feasible: constraints hold to ~1e-10·‖Γ‖. */
export const PRIMAL_FEASIBILITY_TOLERANCE = 1e-10;
/** A primal residual at which the solver stalled (gap already closed) that is still accepted as feasible. */
export const STALLED_PRIMAL_TOLERANCE = 1e-8;
/** A gradient whose part orthogonal to the equality span is below this fraction of its norm is constant on S. */
const NEGLIGIBLE_OBJECTIVE = 1e-14;
/** Multiple of d·ε·(‖G‖ + Σ|y_i|(‖Γ_i‖ + |bound_i|)) treated as the rounding floor of a verified gap. */
const GAP_ROUNDING_FACTOR = 16;
/**
 * Eigenvalues of the analytic centre below this fraction of its largest one mark directions no feasible state uses
 * (the feasible set then lies in a face of the cone, and the interior-point method is run on that face).
 */
export const FACE_EIGENVALUE_RATIO = 1e-9;
/** The analytic centre serves as the start of later solves only if its eigenvalues are within this ratio of each other. */
const WARM_START_EIGENVALUE_RATIO = 1e-3;
/** Gap target of the feasibility run: tight enough that vanishing eigenvalues of the centre fall far below the ratio above. */
const FEASIBILITY_GAP = 1e-12;
/** Golden-section steps when choosing the weight of the exposing multipliers in a face-reduced bound. */
const EXPOSING_SEARCH_STEPS = 40;
/** Lower end of the log10 range, relative to the data scale, searched for that weight. */
const EXPOSING_SEARCH_FLOOR = -6;
/**
 * The upper end keeps the eigenvalue rounding of the shifted matrix (~GAP_ROUNDING_FACTOR·d·ε·weight) below this
 * share of the requested accuracy: otherwise the search would maximize rounding noise, not the bound.
 */
const EXPOSING_ROUNDING_SHARE = 0.1;
/** Share of the requested gap given to the interior-point method's own (unverified) stopping test. */
const INTERNAL_GAP_SHARE = 1;
/** Each retry after a verified gap came out too large tightens the internal test by this factor. */
const GAP_TIGHTENING = 0.1;
/** A Farkas violation must exceed this (relative to the data's scale) to be reported: rounding cannot fake it. */
export const INFEASIBILITY_MARGIN = 1e-10;
/** Constraints whose |y| is at least this share of the largest are named in an infeasibility report. */
const DOMINANT_SHARE = 0.1;
/** A fixed interval value (operator in the equality span) may exceed its bounds by this much, relative, and pass. */
const FIXED_VALUE_TOLERANCE = 1e-9;

interface IntervalRow {
  constraintIndex: number;
  /** ‖Γ'‖_F of the operator with its equality-span part removed. */
  scale: number;
  /** c_k = ⟨E_k, Γ⟩ (equality-span part of Γ). */
  projection: Float64Array;
}

/** The feasible set lies in {σ = V·τ·V†}: an oracle on τ and multipliers that expose the face. */
interface FaceReduction {
  isometry: ComplexMatrix;
  inner: LinearOracle;
  /** Per-constraint multipliers e with −Σ e_i Γ_i = Z + e_0·1, Z ⪰ 0 vanishing on the face (from the feasibility run). */
  exposing: Float64Array;
}

export class LinearOracle {
  readonly dimension: number;
  readonly constraints: readonly OracleConstraint[];
  readonly settings: OracleSettings;
  private readonly span: EqualitySpan;
  private readonly isEquality: boolean[];
  private readonly intervalRows: IntervalRow[] = [];
  private readonly solver: InteriorPointSolver;
  private readonly operatorRe: Float64Array[];
  private readonly operatorIm: Float64Array[];
  private readonly operatorNorms: number[] = [];
  /** Scale of the data used for the infeasibility margin. */
  private readonly dataScale: number;
  /** Infeasibility found while preprocessing, or by a feasibility run; cached for all later calls. */
  private knownInfeasibility: OracleResult | null = null;
  private feasibleResult: OracleResult | null = null;
  /** Set once the feasibility run has been analysed for a face; a face-reduced oracle never looks for another. */
  private faceAnalysed = false;
  private face: FaceReduction | null = null;
  /** The constructor's checkpoint; a call's own checkpoint replaces it for that call. */
  private readonly checkpoint: Checkpoint | undefined;

  constructor(dimension: number, constraints: OracleConstraint[], options?: OracleOptions) {
    if (!Number.isInteger(dimension) || dimension < 1) {
      throw new OracleInputError('dimension', `must be a positive integer, got ${String(dimension)}`);
    }
    if (!Array.isArray(constraints)) throw new OracleInputError('constraints', 'must be an array');
    this.dimension = dimension;
    this.settings = resolveSettings(DEFAULT_ORACLE_SETTINGS, options, 'settings');
    const checkpoint = options?.checkpoint;
    if (checkpoint !== undefined && typeof checkpoint !== 'function') throw new OracleInputError('checkpoint', 'must be a function');
    const implied = options?.impliedEqualityTolerance;
    if (implied !== undefined && !(typeof implied === 'number' && implied > 0 && implied <= 1e-3)) {
      throw new OracleInputError('impliedEqualityTolerance', `must be a number in (0, 1e-3], got ${String(implied)}`);
    }
    this.checkpoint = checkpoint;
    const n = dimension;
    const size = n * n;
    this.isEquality = [];
    this.operatorRe = [];
    this.operatorIm = [];
    let dataScale = 1;
    constraints.forEach((constraint, i) => {
      const field = `constraints[${i}]`;
      if (constraint === null || typeof constraint !== 'object') throw new OracleInputError(field, 'must be an object');
      if (typeof constraint.label !== 'string') throw new OracleInputError(`${field}.label`, 'must be a string');
      checkHermitian(constraint.operator, n, `${field}.operator`);
      const { lower, upper } = constraint;
      if (typeof lower !== 'number' || Number.isNaN(lower) || lower === Infinity) {
        throw new OracleInputError(`${field}.lower`, `must be a number below +Infinity, got ${String(lower)}`);
      }
      if (typeof upper !== 'number' || Number.isNaN(upper) || upper === -Infinity) {
        throw new OracleInputError(`${field}.upper`, `must be a number above -Infinity, got ${String(upper)}`);
      }
      if (lower > upper) throw new OracleInputError(`${field}.lower`, `exceeds upper (${lower} > ${upper})`);
      // Symmetrised copies: the inner products below assume exactly Hermitian storage.
      const re = new Float64Array(size);
      const im = new Float64Array(size);
      for (let a = 0; a < n; a++) {
        for (let b = 0; b < n; b++) {
          re[a * n + b] = 0.5 * (constraint.operator.re[a * n + b] + constraint.operator.re[b * n + a]);
          im[a * n + b] = 0.5 * (constraint.operator.im[a * n + b] - constraint.operator.im[b * n + a]);
        }
      }
      this.operatorRe.push(re);
      this.operatorIm.push(im);
      this.isEquality.push(lower === upper);
      this.operatorNorms.push(Math.sqrt(hermitianInner(re, im, re, im)));
      dataScale = Math.max(dataScale, this.operatorNorms[i]);
      if (Number.isFinite(lower)) dataScale = Math.max(dataScale, Math.abs(lower));
      if (Number.isFinite(upper)) dataScale = Math.max(dataScale, Math.abs(upper));
    });
    this.constraints = constraints.map((c) => ({ ...c }));
    this.dataScale = dataScale;

    const equalityIndices: number[] = [];
    constraints.forEach((_, i) => {
      if (this.isEquality[i]) equalityIndices.push(i);
    });
    this.span = new EqualitySpan(
      n,
      equalityIndices.map((i) => ({ re: this.operatorRe[i], im: this.operatorIm[i] })),
      equalityIndices.map((i) => constraints[i].lower),
      equalityIndices,
      checkpoint,
      options?.impliedEqualityTolerance,
    );
    checkpoint?.();

    // Interval rows: operators with their equality-span part removed (better conditioned; fixed values detected).
    const rowsRe: Float64Array[] = [...this.span.basisRe];
    const rowsIm: Float64Array[] = [...this.span.basisIm];
    const rhs: number[] = [...this.span.basisValues];
    const slackRow: number[] = [];
    const slackSign: number[] = [];
    const boxRhs: number[] = [];
    const boxFirst: number[] = [];
    const boxSecond: number[] = [];
    const fixedViolations: Float64Array[] = [];
    constraints.forEach((constraint, i) => {
      if (this.isEquality[i]) return;
      if (constraint.lower === -Infinity && constraint.upper === Infinity) return;
      checkpoint?.();
      const re = this.operatorRe[i].slice();
      const im = this.operatorIm[i].slice();
      const projection = this.span.coefficientsOf(re, im);
      this.span.subtractCombination(re, im, projection);
      const second = this.span.coefficientsOf(re, im);
      this.span.subtractCombination(re, im, second);
      for (let k = 0; k < projection.length; k++) projection[k] += second[k];
      const offset = projection.reduce((s, c, k) => s + c * this.span.basisValues[k], 0);
      const norm = Math.sqrt(hermitianInner(re, im, re, im));
      const originalNorm = Math.sqrt(hermitianInner(this.operatorRe[i], this.operatorIm[i], this.operatorRe[i], this.operatorIm[i]));
      if (norm <= DEPENDENCE_TOLERANCE * originalNorm || norm === 0) {
        // Tr(Γσ) is fixed by the equalities: either always satisfied or a certificate y = ±(e_i − Σ c_k E_k).
        const slackTolerance = FIXED_VALUE_TOLERANCE * (1 + Math.abs(offset));
        if (offset < constraint.lower - slackTolerance || offset > constraint.upper + slackTolerance) {
          const y = new Float64Array(constraints.length);
          const direction = offset < constraint.lower ? 1 : -1;
          y[i] = direction;
          const weights = projection.map((c) => -direction * c);
          this.span.toOriginal(weights, y);
          fixedViolations.push(y);
        }
        return;
      }
      // One cone row per interval: Γ'σ − s = ℓ' (s ≥ 0), with s + t = u' − ℓ' (t ≥ 0) when both sides are finite;
      // an upper-only interval reads Γ'σ + s = u'.
      const row = rowsRe.length;
      const inverse = 1 / norm;
      const scaledRe = new Float64Array(size);
      const scaledIm = new Float64Array(size);
      for (let t = 0; t < size; t++) {
        scaledRe[t] = re[t] * inverse;
        scaledIm[t] = im[t] * inverse;
      }
      rowsRe.push(scaledRe);
      rowsIm.push(scaledIm);
      const hasLower = Number.isFinite(constraint.lower);
      rhs.push(((hasLower ? constraint.lower : constraint.upper) - offset) * inverse);
      slackRow.push(row);
      slackSign.push(hasLower ? -1 : 1);
      if (hasLower && Number.isFinite(constraint.upper)) {
        boxRhs.push((constraint.upper - constraint.lower) * inverse);
        boxFirst.push(slackRow.length - 1);
        slackRow.push(-1);
        slackSign.push(1);
        boxSecond.push(slackRow.length - 1);
      }
      this.intervalRows.push({ constraintIndex: i, scale: norm, projection });
    });
    const rows: InteriorPointRows = {
      re: rowsRe,
      im: rowsIm,
      rhs: Float64Array.from(rhs),
      orthonormalRows: this.span.size,
      slackRow: Int32Array.from(slackRow),
      slackSign: Float64Array.from(slackSign),
      boxRhs: Float64Array.from(boxRhs),
      boxFirst: Int32Array.from(boxFirst),
      boxSecond: Int32Array.from(boxSecond),
    };
    checkpoint?.();
    const tensor = options?.tensorStructure === false ? undefined : this.tensorRows(rows);
    if (tensor) rows.tensor = tensor;
    checkpoint?.();
    this.solver = new InteriorPointSolver(n, rows);

    // Inconsistent data found while preprocessing: report the first certificate that verifies.
    const candidates: Float64Array[] = [...fixedViolations];
    for (const dependent of this.span.dependent) {
      if (dependent.consistent) continue;
      const y = new Float64Array(constraints.length);
      const direction = dependent.mismatch > 0 ? 1 : -1;
      y[dependent.constraintIndex] = direction;
      this.span.toOriginal(
        dependent.coefficients.map((c) => -direction * c),
        y,
      );
      candidates.push(y);
    }
    for (const y of candidates) {
      const certificate = this.farkasCertificate(y);
      if (certificate) {
        this.knownInfeasibility = this.infeasibleResult(certificate, 0, 'constraints are inconsistent (found while preprocessing: dependent equalities or intervals fixed by the equalities)');
        break;
      }
    }
  }

  /**
   * The interior-point rows as combinations of the identity, the independent equality operators and the interval
   * operators, when all of them are tensor products under one factorization d = d_A·d_B (undefined otherwise).
   */
  private tensorRows(rows: InteriorPointRows): TensorRows | undefined {
    const n = this.dimension;
    const m = rows.re.length;
    const identity: { re: Float64Array; im: Float64Array } = { re: new Float64Array(n * n), im: new Float64Array(n * n) };
    for (let i = 0; i < n; i++) identity.re[i * n + i] = 1;
    const operators = [identity];
    const sourceColumns = this.span.sourceIndex.length;
    for (let j = 1; j < sourceColumns; j++) {
      const i = this.span.sourceIndex[j];
      operators.push({ re: this.operatorRe[i], im: this.operatorIm[i] });
    }
    for (const row of this.intervalRows) operators.push({ re: this.operatorRe[row.constraintIndex], im: this.operatorIm[row.constraintIndex] });
    const p = operators.length;
    const common = commonTensorFactors(operators, n);
    if (!common) return undefined;
    const combination = new Float64Array(m * p);
    this.span.transform.forEach((tk, k) => tk.forEach((c, j) => (combination[k * p + j] = c)));
    this.intervalRows.forEach((row, r) => {
      const k = this.span.size + r;
      const inverse = 1 / row.scale;
      combination[k * p + sourceColumns + r] = inverse;
      row.projection.forEach((c, q) => this.span.transform[q].forEach((t, j) => (combination[k * p + j] -= c * t * inverse)));
    });
    if (!combinationRebuildsRows(operators, combination, rows.re, rows.im)) return undefined;
    return {
      dimensionA: common.a,
      dimensionB: common.b,
      leftRe: common.factors.map((f) => f.leftRe),
      leftIm: common.factors.map((f) => f.leftIm),
      rightRe: common.factors.map((f) => f.rightRe),
      rightIm: common.factors.map((f) => f.rightIm),
      combination,
    };
  }

  /** How the interior-point method assembles its Schur complement: from tensor-product factors or dense products. */
  get schurAssembly(): 'tensor' | 'dense' {
    return this.solver.usesTensorRows ? 'tensor' : 'dense';
  }

  /** min ⟨G, σ⟩ over S = {σ ⪰ 0, Tr σ = 1, lower ≤ Tr(Γσ) ≤ upper}. G Hermitian d×d. */
  minimize(G: ComplexMatrix, options?: MinimizeOptions): OracleResult {
    checkHermitian(G, this.dimension, 'G');
    const resolved = resolveSettings(this.settings, options, 'settings');
    const checkpoint = options?.checkpoint ?? this.checkpoint;
    if (this.knownInfeasibility) return this.copyInfeasible(this.knownInfeasibility);
    if (!this.faceAnalysed) {
      const feasibility = this.findFeasiblePoint({ checkpoint });
      if (feasibility.status === 'INFEASIBLE') return feasibility;
    }
    const n = this.dimension;
    const size = n * n;
    const gRe = new Float64Array(size);
    const gIm = new Float64Array(size);
    for (let a = 0; a < n; a++) {
      for (let b = 0; b < n; b++) {
        gRe[a * n + b] = 0.5 * (G.re[a * n + b] + G.re[b * n + a]);
        gIm[a * n + b] = 0.5 * (G.im[a * n + b] - G.im[b * n + a]);
      }
    }
    // Strip the equality-span part (constant on S) and normalise: the IPM then sees only what varies on S.
    const spanCoefficients = this.span.coefficientsOf(gRe, gIm);
    const strippedRe = gRe.slice();
    const strippedIm = gIm.slice();
    this.span.subtractCombination(strippedRe, strippedIm, spanCoefficients);
    const second = this.span.coefficientsOf(strippedRe, strippedIm);
    this.span.subtractCombination(strippedRe, strippedIm, second);
    for (let k = 0; k < second.length; k++) spanCoefficients[k] += second[k];
    const constantPart = spanCoefficients.reduce((s, c, k) => s + c * this.span.basisValues[k], 0);
    const objectiveScale = Math.sqrt(hermitianInner(strippedRe, strippedIm, strippedRe, strippedIm));
    const gradientNorm = Math.sqrt(hermitianInner(gRe, gIm, gRe, gIm));
    if (objectiveScale <= NEGLIGIBLE_OBJECTIVE * gradientNorm) {
      // ⟨G, σ⟩ is the same for every feasible σ: any feasible point is optimal.
      const feasible = this.findFeasiblePoint({ checkpoint });
      if (feasible.status !== 'OPTIMAL' || !feasible.point) return feasible;
      return this.assembleResult(G, feasible.point, new Float64Array(this.solver.m), 0, spanCoefficients, feasible.iterations, 'OPTIMAL');
    }
    if (this.face) {
      const stripped = new ComplexMatrix(n, n, strippedRe.slice(), strippedIm.slice());
      const reduced = this.minimizeOnFace(this.face, G, stripped, spanCoefficients, resolved, checkpoint);
      if (reduced) return reduced;
    }
    for (let t = 0; t < size; t++) {
      strippedRe[t] /= objectiveScale;
      strippedIm[t] /= objectiveScale;
    }
    this.solver.setObjective(strippedRe, strippedIm);
    let internalShare = INTERNAL_GAP_SHARE;
    let resume = false;
    let best: OracleResult | null = null;
    let status: InteriorPointStatus;
    for (;;) {
      const share = internalShare;
      status = this.solver.solve(
        {
          gapTolerance: (scaledPrimal) =>
            share *
            resolved.relativeAccuracy *
            Math.min((1 + Math.abs(objectiveScale * scaledPrimal + constantPart)) / objectiveScale, 1 + Math.abs(scaledPrimal)),
          primalTolerance: PRIMAL_FEASIBILITY_TOLERANCE,
          maxIterations: resolved.maxIterations - (resume ? this.solver.iterations : 0),
          certifyInfeasible: (y) => this.recordRayIfCertified(y),
          checkpoint,
        },
        resume,
      );
      resume = true;
      if (status === 'INFEASIBLE' && this.knownInfeasibility) return this.copyInfeasible(this.knownInfeasibility);
      const stalledAcceptably = status === 'STALLED' && this.solver.primalResidualNorm <= STALLED_PRIMAL_TOLERANCE;
      if (status !== 'CONVERGED' && !stalledAcceptably) break;
      const result = this.resultFromSolver(G, objectiveScale, spanCoefficients, 'OPTIMAL');
      if (stalledAcceptably) result.message = `primal residual stalled at ${this.solver.primalResidualNorm.toExponential(2)} (ill-conditioned near the boundary)`;
      // The verified gap uses the recomputed dual bound; the solver's own test is only a proxy for it.
      const strippedPrimal = result.primalValue - constantPart;
      const threshold = Math.max(
        resolved.relativeAccuracy * Math.min(1 + Math.abs(result.primalValue), Math.min(1, objectiveScale) + Math.abs(strippedPrimal)),
        this.roundingLevel(gradientNorm, result),
      );
      if (result.primalValue - result.dualBound <= threshold) return result;
      // Pushing further can end in a failed factorization; keep the best verified answer in case it does.
      if (!best || result.primalValue - result.dualBound < best.primalValue - best.dualBound) best = result;
      if (this.solver.iterations >= resolved.maxIterations || stalledAcceptably) break;
      internalShare *= GAP_TIGHTENING;
    }
    const last = this.resultFromSolver(G, objectiveScale, spanCoefficients, 'ITERATION_LIMIT');
    const fallback = best && best.primalValue - best.dualBound < last.primalValue - last.dualBound ? best : last;
    fallback.status = status === 'NUMERICAL_ERROR' ? 'NUMERICAL_ERROR' : 'ITERATION_LIMIT';
    fallback.iterations = this.solver.iterations;
    const gapNote = `gap ${(fallback.primalValue - fallback.dualBound).toExponential(2)}; the dual bound is still valid`;
    fallback.message =
      status === 'NUMERICAL_ERROR'
        ? `a factorization failed inside the interior-point method after ${this.solver.iterations} iterations (iterates this close to the boundary are at the limit of double precision; relative accuracies below ~1e-11 often end here); ${gapNote}`
        : status === 'STALLED'
          ? `progress stalled after ${this.solver.iterations} interior-point iterations (primal residual ${this.solver.primalResidualNorm.toExponential(2)}); ${gapNote}`
          : `stopped after ${this.solver.iterations} interior-point iterations; ${gapNote}`;
    // No convergence: infeasible data is the usual reason; the feasibility run decides and is cached.
    const feasibility = this.findFeasiblePoint({ checkpoint });
    if (feasibility.status === 'INFEASIBLE') return this.copyInfeasible(feasibility);
    return fallback;
  }

  /** Size of the rounding error in ⟨G, σ⟩ and in the recomputed bound: no gap below this can be measured. */
  private roundingLevel(gradientNorm: number, result: OracleResult): number {
    let weighted = gradientNorm;
    for (let i = 0; i < this.constraints.length; i++) {
      const y = result.multipliersLower[i] + result.multipliersUpper[i];
      if (y !== 0) weighted += y * (this.operatorNorms[i] + Math.abs(Number.isFinite(this.constraints[i].lower) ? this.constraints[i].lower : this.constraints[i].upper));
    }
    return GAP_ROUNDING_FACTOR * this.dimension * Number.EPSILON * weighted;
  }

  /**
   * Feasibility check once per problem: the analytic centre of S (the central path of the zero objective), i.e. as
   * interior as S allows, or INFEASIBLE with a Farkas certificate. Cached.
   */
  findFeasiblePoint(options?: { checkpoint?: Checkpoint }): OracleResult {
    const checkpoint = options?.checkpoint ?? this.checkpoint;
    if (this.knownInfeasibility) return this.copyInfeasible(this.knownInfeasibility);
    if (this.feasibleResult) return this.copyResult(this.feasibleResult);
    const size = this.dimension * this.dimension;
    this.solver.setObjective(new Float64Array(size), new Float64Array(size));
    const status = this.solver.solve(
      {
        gapTolerance: () => Math.min(this.settings.relativeAccuracy, FEASIBILITY_GAP),
        primalTolerance: PRIMAL_FEASIBILITY_TOLERANCE,
        maxIterations: this.settings.maxIterations,
        certifyInfeasible: (y) => this.recordRayIfCertified(y),
        checkpoint,
      },
      false,
    );
    if (status === 'INFEASIBLE' && this.knownInfeasibility) return this.copyInfeasible(this.knownInfeasibility);
    const zero = new ComplexMatrix(this.dimension, this.dimension);
    const accepted = status === 'CONVERGED' || (status === 'STALLED' && this.solver.primalResidualNorm <= STALLED_PRIMAL_TOLERANCE);
    const result = this.resultFromSolver(zero, 1, new Float64Array(this.span.size), accepted ? 'OPTIMAL' : status === 'NUMERICAL_ERROR' ? 'NUMERICAL_ERROR' : 'ITERATION_LIMIT');
    if (result.status === 'OPTIMAL') {
      this.feasibleResult = result;
      const centre = { xRe: this.solver.xRe.slice(), xIm: this.solver.xIm.slice(), slack: this.solver.slack.slice() };
      if (!this.faceAnalysed) {
        const wellInside = this.analyseFace(result.point as ComplexMatrix, this.multipliersFromSolver(this.solver.y, 1, new Float64Array(this.span.size)));
        // Later solves start from the analytic centre (primal feasible, centred) when it is well inside the cone.
        if (wellInside && status === 'CONVERGED') this.solver.primalStart = centre;
      }
      return this.copyResult(result);
    }
    this.faceAnalysed = true;
    result.message = `no feasible point found and no infeasibility certificate either (status ${status}, primal residual ${this.solver.primalResidualNorm.toExponential(2)})`;
    return result;
  }

  /**
   * Facial reduction from the analytic centre: its range is the smallest face holding S. When that face is proper,
   * later solves run on it (the full-space problem has no interior point and its multipliers diverge). Returns
   * whether the centre is well inside the cone.
   */
  private analyseFace(centre: ComplexMatrix, exposing: Float64Array): boolean {
    this.faceAnalysed = true;
    const { values, vectors } = eigh(centre);
    const n = this.dimension;
    const largest = values[n - 1];
    let first = 0;
    while (first < n && values[first] <= FACE_EIGENVALUE_RATIO * largest) first++;
    if (first === 0) return values[0] >= WARM_START_EIGENVALUE_RATIO * largest;
    const rank = n - first;
    const isometry = new ComplexMatrix(n, rank);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < rank; j++) {
        isometry.re[i * rank + j] = vectors.re[i * n + first + j];
        isometry.im[i * rank + j] = vectors.im[i * n + first + j];
      }
    }
    const compressed = this.constraints.map((c, i) => ({
      ...c,
      operator: compressHermitian(isometry, new ComplexMatrix(n, n, this.operatorRe[i], this.operatorIm[i])),
    }));
    const inner = new LinearOracle(rank, compressed, { ...this.settings, checkpoint: this.checkpoint });
    inner.faceAnalysed = true;
    this.face = { isometry, inner, exposing };
    return false;
  }

  /** Solves on the face and lifts back; the bound adds the exposing multipliers with the weight that maximizes (★). */
  private minimizeOnFace(
    face: FaceReduction,
    G: ComplexMatrix,
    stripped: ComplexMatrix,
    spanCoefficients: Float64Array,
    settings: OracleSettings,
    checkpoint: Checkpoint | undefined,
  ): OracleResult | null {
    // The face problem sees the stripped G; the full-space span part goes back into y exactly, so the off-face
    // blocks it carries cost nothing in the full-space bound.
    const inner = face.inner.minimize(compressHermitian(face.isometry, stripped), { ...settings, checkpoint });
    if (inner.status !== 'OPTIMAL' || !inner.point) return null;
    const point = expandHermitian(face.isometry, inner.point);
    const innerY = Float64Array.from(inner.multipliersLower, (x, i) => x - inner.multipliersUpper[i]);
    this.span.toOriginal(spanCoefficients, innerY);
    let scaleOfData = Math.sqrt(hermitianInner(G.re, G.im, G.re, G.im));
    innerY.forEach((y, i) => (scaleOfData += Math.abs(y) * this.operatorNorms[i]));
    const boundAt = (logWeight: number): { bound: number; lower: Float64Array; upper: Float64Array } => {
      const weight = logWeight === -Infinity ? 0 : scaleOfData * 10 ** logWeight;
      const y = Float64Array.from(innerY, (x, i) => x + weight * face.exposing[i]);
      const { lower, upper } = this.splitMultipliers(y);
      return { bound: this.dualBound(G, lower, upper), lower, upper };
    };
    // (★) is concave in y, so along y + t·e it is unimodal in t and in log t: golden-section search.
    let exposingSize = 0;
    face.exposing.forEach((e, i) => (exposingSize += Math.abs(e) * this.operatorNorms[i]));
    let left = EXPOSING_SEARCH_FLOOR;
    let right = Math.log10(
      (EXPOSING_ROUNDING_SHARE * settings.relativeAccuracy) / (GAP_ROUNDING_FACTOR * this.dimension * Number.EPSILON * Math.max(exposingSize, Number.MIN_VALUE)),
    );
    if (!(right > left)) right = left;
    const ratio = (Math.sqrt(5) - 1) / 2;
    let a = right - ratio * (right - left);
    let b = left + ratio * (right - left);
    let fa = boundAt(a);
    let fb = boundAt(b);
    for (let step = 0; step < EXPOSING_SEARCH_STEPS; step++) {
      if (fa.bound >= fb.bound) {
        right = b;
        b = a;
        fb = fa;
        a = right - ratio * (right - left);
        fa = boundAt(a);
      } else {
        left = a;
        a = b;
        fa = fb;
        b = left + ratio * (right - left);
        fb = boundAt(b);
      }
    }
    let best = fa.bound >= fb.bound ? fa : fb;
    const plain = boundAt(-Infinity);
    if (plain.bound > best.bound) best = plain;
    const primalValue = hermitianInner(G.re, G.im, point.re, point.im);
    const gap = primalValue - best.bound;
    const withinAccuracy = gap <= settings.relativeAccuracy * (1 + Math.abs(primalValue));
    return {
      status: withinAccuracy ? 'OPTIMAL' : 'ITERATION_LIMIT',
      point,
      multipliersLower: best.lower,
      multipliersUpper: best.upper,
      primalValue,
      dualBound: best.bound,
      iterations: inner.iterations,
      message:
        `solved on a face of dimension ${face.isometry.cols} < ${this.dimension} (no feasible state has full rank)` +
        (withinAccuracy
          ? ''
          : `; the full-space bound is ${gap.toExponential(2)} below (multipliers that expose a face only approach the optimum as they grow; reduce the problem to the face for tight bounds)`),
    };
  }

  /** Orthogonal (Hilbert–Schmidt) projection of a Hermitian X onto {Tr X = 1, Tr(Γ_i X) = b_i for the equalities}. */
  projectOntoEqualities(X: ComplexMatrix): ComplexMatrix {
    checkHermitian(X, this.dimension, 'X');
    const re = X.re.slice();
    const im = X.im.slice();
    // Two passes: the second removes what rounding left of the first.
    for (let pass = 0; pass < 2; pass++) {
      const a = this.span.coefficientsOf(re, im);
      for (let k = 0; k < a.length; k++) a[k] -= this.span.basisValues[k];
      this.span.subtractCombination(re, im, a);
    }
    return new ComplexMatrix(this.dimension, this.dimension, re, im);
  }

  /** G = stripped + c0·1 + Σ c_i Γ_i with stripped ⟂ span{1, equality operators} (Hilbert–Schmidt). */
  stripEqualitySpan(G: ComplexMatrix): { stripped: ComplexMatrix; identityCoefficient: number; equalityCoefficients: Float64Array } {
    checkHermitian(G, this.dimension, 'G');
    const re = G.re.slice();
    const im = G.im.slice();
    const total = new Float64Array(this.span.size);
    for (let pass = 0; pass < 2; pass++) {
      const a = this.span.coefficientsOf(re, im);
      this.span.subtractCombination(re, im, a);
      for (let k = 0; k < a.length; k++) total[k] += a[k];
    }
    const equalityCoefficients = new Float64Array(this.constraints.length);
    const identityCoefficient = this.span.toOriginal(total, equalityCoefficients);
    return { stripped: new ComplexMatrix(this.dimension, this.dimension, re, im), identityCoefficient, equalityCoefficients };
  }

  /** Per-constraint multipliers y (signed, Σ y_i Γ_i) from the solver's scaled dual ŷ, objective scale g and span part a. */
  private multipliersFromSolver(yScaled: Float64Array, objectiveScale: number, spanCoefficients: Float64Array): Float64Array {
    const y = new Float64Array(this.constraints.length);
    const weights = new Float64Array(this.span.size);
    for (let k = 0; k < this.span.size; k++) weights[k] = spanCoefficients[k] + objectiveScale * yScaled[k];
    for (let r = 0; r < this.intervalRows.length; r++) {
      const row = this.intervalRows[r];
      const constraint = this.constraints[row.constraintIndex];
      let value = (objectiveScale * yScaled[this.span.size + r]) / row.scale;
      // A one-sided interval admits one sign only; clamping a rounding-level wrong sign keeps (★) valid.
      if (!Number.isFinite(constraint.upper)) value = Math.max(value, 0);
      if (!Number.isFinite(constraint.lower)) value = Math.min(value, 0);
      y[row.constraintIndex] = value;
      for (let k = 0; k < this.span.size; k++) weights[k] -= value * row.projection[k];
    }
    this.span.toOriginal(weights, y);
    return y;
  }

  private resultFromSolver(G: ComplexMatrix, objectiveScale: number, spanCoefficients: Float64Array, status: OracleResult['status']): OracleResult {
    const n = this.dimension;
    const solver = this.solver;
    let trace = 0;
    for (let i = 0; i < n; i++) trace += solver.xRe[i * n + i];
    const point = new ComplexMatrix(n, n, solver.xRe.slice(), solver.xIm.slice());
    for (let t = 0; t < n * n; t++) {
      point.re[t] /= trace;
      point.im[t] /= trace;
    }
    return this.assembleResult(G, point, solver.y, objectiveScale, spanCoefficients, solver.iterations, status);
  }

  private assembleResult(
    G: ComplexMatrix,
    point: ComplexMatrix,
    yScaled: Float64Array,
    objectiveScale: number,
    spanCoefficients: Float64Array,
    iterations: number,
    status: OracleResult['status'],
  ): OracleResult {
    const y = this.multipliersFromSolver(yScaled, objectiveScale, spanCoefficients);
    // A diverged interior-point run can leave non-finite iterates (d32#19's exposing search): no answer, not an exception.
    if (!allFinite(y) || !allFinite(point.re) || !allFinite(point.im)) {
      return {
        status: 'NUMERICAL_ERROR',
        point: null,
        multipliersLower: new Float64Array(y.length),
        multipliersUpper: new Float64Array(y.length),
        primalValue: Number.NaN,
        dualBound: -Infinity,
        iterations,
        message: `the interior-point iterates are not finite after ${iterations} iterations`,
      };
    }
    const { lower, upper } = this.splitMultipliers(y);
    return {
      status,
      point,
      multipliersLower: lower,
      multipliersUpper: upper,
      primalValue: hermitianInner(G.re, G.im, point.re, point.im),
      dualBound: this.dualBound(G, lower, upper),
      iterations,
    };
  }

  /** y⁺ = max(y, 0), y⁻ = max(−y, 0); a side with an infinite bound gets no multiplier. */
  private splitMultipliers(y: Float64Array): { lower: Float64Array; upper: Float64Array } {
    const lower = new Float64Array(y.length);
    const upper = new Float64Array(y.length);
    for (let i = 0; i < y.length; i++) {
      if (y[i] > 0 && Number.isFinite(this.constraints[i].lower)) lower[i] = y[i];
      else if (y[i] < 0 && Number.isFinite(this.constraints[i].upper)) upper[i] = -y[i];
    }
    return { lower, upper };
  }

  /** (★): Σ y⁺ℓ − Σ y⁻u + λ_min(G − Σ (y⁺ − y⁻)Γ), with the project's eigensolver. */
  dualBound(G: ComplexMatrix, multipliersLower: Float64Array, multipliersUpper: Float64Array): number {
    const n = this.dimension;
    const shifted = new ComplexMatrix(n, n, G.re.slice(), G.im.slice());
    let linear = 0;
    for (let i = 0; i < this.constraints.length; i++) {
      const yi = multipliersLower[i] - multipliersUpper[i];
      if (multipliersLower[i] !== 0) linear += multipliersLower[i] * this.constraints[i].lower;
      if (multipliersUpper[i] !== 0) linear -= multipliersUpper[i] * this.constraints[i].upper;
      if (yi === 0) continue;
      const re = this.operatorRe[i];
      const im = this.operatorIm[i];
      for (let t = 0; t < n * n; t++) {
        shifted.re[t] -= yi * re[t];
        shifted.im[t] -= yi * im[t];
      }
    }
    return linear + eigvalsh(shifted)[0];
  }

  /** Normalises y (Σ|y| = 1) and returns the Farkas certificate if its violation, recomputed with eigh, is convincing. */
  private farkasCertificate(y: Float64Array): InfeasibilityCertificate | null {
    const { lower, upper } = this.splitMultipliers(y);
    let total = 0;
    for (let i = 0; i < y.length; i++) total += lower[i] + upper[i];
    // A multiplier on an open side cannot be part of a certificate.
    for (let i = 0; i < y.length; i++) if ((y[i] !== 0 && lower[i] === 0 && upper[i] === 0) || !Number.isFinite(y[i])) return null;
    if (!(total > 0)) return null;
    for (let i = 0; i < y.length; i++) {
      lower[i] /= total;
      upper[i] /= total;
    }
    const n = this.dimension;
    const combination = new ComplexMatrix(n, n);
    let linear = 0;
    for (let i = 0; i < y.length; i++) {
      const yi = lower[i] - upper[i];
      if (lower[i] !== 0) linear += lower[i] * this.constraints[i].lower;
      if (upper[i] !== 0) linear -= upper[i] * this.constraints[i].upper;
      for (let t = 0; t < n * n; t++) {
        combination.re[t] += yi * this.operatorRe[i][t];
        combination.im[t] += yi * this.operatorIm[i][t];
      }
    }
    const values = eigvalsh(combination);
    const violation = linear - values[n - 1];
    if (!(violation > INFEASIBILITY_MARGIN * this.dataScale)) return null;
    const magnitudes = Array.from({ length: y.length }, (_, i) => ({ i, size: lower[i] + upper[i] }));
    const largest = Math.max(...magnitudes.map((e) => e.size));
    const dominantConstraints = magnitudes
      .filter((e) => e.size >= DOMINANT_SHARE * largest && e.size > 0)
      .sort((a, b) => b.size - a.size)
      .map((e) => this.constraints[e.i].label);
    return { multipliersLower: lower, multipliersUpper: upper, violation, dominantConstraints };
  }

  /** Callback for the solver: maps the (scaled) dual direction to per-constraint y and caches a verified certificate. */
  private recordRayIfCertified(yScaled: Float64Array): boolean {
    const y = this.multipliersFromSolver(yScaled, 1, new Float64Array(this.span.size));
    const certificate = this.farkasCertificate(y);
    if (!certificate) return false;
    this.knownInfeasibility = this.infeasibleResult(certificate, this.solver.iterations, 'no density operator satisfies the constraints');
    return true;
  }

  private infeasibleResult(certificate: InfeasibilityCertificate, iterations: number, reason: string): OracleResult {
    return {
      status: 'INFEASIBLE',
      point: null,
      multipliersLower: certificate.multipliersLower,
      multipliersUpper: certificate.multipliersUpper,
      primalValue: Number.NaN,
      dualBound: Infinity,
      iterations,
      infeasibility: certificate,
      message: `${reason}; Farkas violation ${certificate.violation.toExponential(3)}, largest multipliers on: ${certificate.dominantConstraints.join(', ')}`,
    };
  }

  private copyInfeasible(result: OracleResult): OracleResult {
    return this.copyResult(result);
  }

  private copyResult(result: OracleResult): OracleResult {
    return {
      ...result,
      point: result.point ? result.point.clone() : null,
      multipliersLower: result.multipliersLower.slice(),
      multipliersUpper: result.multipliersUpper.slice(),
      infeasibility: result.infeasibility
        ? {
            ...result.infeasibility,
            multipliersLower: result.infeasibility.multipliersLower.slice(),
            multipliersUpper: result.infeasibility.multipliersUpper.slice(),
            dominantConstraints: [...result.infeasibility.dominantConstraints],
          }
        : undefined,
    };
  }
}

/** V†·A·V for a d×r isometry V (Hermitian part, to remove rounding asymmetry). */
function compressHermitian(v: ComplexMatrix, a: ComplexMatrix): ComplexMatrix {
  const d = v.rows;
  const r = v.cols;
  const out = new ComplexMatrix(r, r);
  const av = new ComplexMatrix(d, r);
  for (let i = 0; i < d; i++) {
    for (let k = 0; k < d; k++) {
      const ar = a.re[i * d + k];
      const ai = a.im[i * d + k];
      if (ar === 0 && ai === 0) continue;
      for (let j = 0; j < r; j++) {
        const vr = v.re[k * r + j];
        const vi = v.im[k * r + j];
        av.re[i * r + j] += ar * vr - ai * vi;
        av.im[i * r + j] += ar * vi + ai * vr;
      }
    }
  }
  for (let i = 0; i < r; i++) {
    for (let j = 0; j < r; j++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < d; k++) {
        // conj(V_ki)·(AV)_kj
        const vr = v.re[k * r + i];
        const vi = v.im[k * r + i];
        sr += vr * av.re[k * r + j] + vi * av.im[k * r + j];
        si += vr * av.im[k * r + j] - vi * av.re[k * r + j];
      }
      out.re[i * r + j] = sr;
      out.im[i * r + j] = si;
    }
  }
  for (let i = 0; i < r; i++) {
    out.im[i * r + i] = 0;
    for (let j = i + 1; j < r; j++) {
      const re = 0.5 * (out.re[i * r + j] + out.re[j * r + i]);
      const im = 0.5 * (out.im[i * r + j] - out.im[j * r + i]);
      out.re[i * r + j] = re;
      out.re[j * r + i] = re;
      out.im[i * r + j] = im;
      out.im[j * r + i] = -im;
    }
  }
  return out;
}

/** V·τ·V† for a d×r isometry V. */
function expandHermitian(v: ComplexMatrix, tau: ComplexMatrix): ComplexMatrix {
  const d = v.rows;
  const r = v.cols;
  const vt = new ComplexMatrix(d, r);
  for (let i = 0; i < d; i++) {
    for (let k = 0; k < r; k++) {
      const ar = v.re[i * r + k];
      const ai = v.im[i * r + k];
      for (let j = 0; j < r; j++) {
        vt.re[i * r + j] += ar * tau.re[k * r + j] - ai * tau.im[k * r + j];
        vt.im[i * r + j] += ar * tau.im[k * r + j] + ai * tau.re[k * r + j];
      }
    }
  }
  const out = new ComplexMatrix(d, d);
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < r; k++) {
        // (Vτ)_ik · conj(V_jk)
        const br = v.re[j * r + k];
        const bi = v.im[j * r + k];
        sr += vt.re[i * r + k] * br + vt.im[i * r + k] * bi;
        si += vt.im[i * r + k] * br - vt.re[i * r + k] * bi;
      }
      out.re[i * d + j] = sr;
      out.im[i * d + j] = si;
      out.re[j * d + i] = sr;
      out.im[j * d + i] = -si;
    }
    out.im[i * d + i] = 0;
  }
  return out;
}

function allFinite(values: ArrayLike<number>): boolean {
  for (let i = 0; i < values.length; i++) if (!Number.isFinite(values[i])) return false;
  return true;
}
