// Primal–dual interior-point method for one Hermitian PSD block plus a nonnegative LP block:
//   min ⟨C, X⟩  s.t.  Re Tr(A_k X) + Σ_{j: row_j = k} sign_j x_j = b_k   (cone rows),
//                     x_s + x_t = w_q                                     (box rows: two-sided intervals),
//                     X ⪰ 0, x ≥ 0,
// with the HKM search direction and Mehrotra's predictor–corrector (Helmberg, Rendl, Vanderbei & Wolkowicz 1996;
// Kojima, Shindoh & Hara 1997; Monteiro 1997; Mehrotra 1992). Box rows are eliminated from the Schur complement,
// so a two-sided interval costs one row, not two. Infeasible start; all buffers allocated once per problem; real
// data run on real-arithmetic kernels.
import {
  blockedPairSums,
  choleskyInPlace,
  choleskyInPlaceReal,
  hermitianInner,
  hermitianPartInPlace,
  lowerCongruence,
  lowerCongruenceSymmetricReal,
  lowerGram,
  lowerGramReal,
  lowerTimesTransposed,
  lowerTimesTransposedReal,
  lowerTriangularInverse,
  lowerTriangularInverseReal,
  multiplyByHermitian,
  multiplyByLowerAdjointRightHermitian,
  multiplyByLowerLeft,
  multiplyBySymmetricReal,
  realCholeskySolveInPlace,
  smallestEigenvalueInPlace,
  smallestEigenvalueInPlaceReal,
  toSparse,
  transposedProductWithLowerReal,
  transposedSparseProductWithLower,
  transposedSparseProductWithLowerReal,
  transposeInto,
  TridiagonalWorkspace,
  type SparseOperator,
} from './kernels.js';
import { applyTensorLeft, type TensorFactors, type TensorRows } from './tensor-rows.js';
import { pollAtOrder } from '../linear-algebra/interruption.js';

/** Fraction of the distance to the cone boundary taken by a step, before the adaptive increase (SDPT3 practice). */
const BASE_STEP_FRACTION = 0.9;
/** Added to the step fraction in proportion to the predictor's step lengths, so long steps go closer to the boundary. */
const ADAPTIVE_STEP_FRACTION = 0.09;
/** Mehrotra's centring exponent: σ = (µ_affine/µ)^3. */
const CENTRING_EXPONENT = 3;
/** Relative diagonal shift tried when the Schur complement loses positive definiteness to rounding. */
const SCHUR_REGULARIZATION = 1e-13;
/** Smallest slack value used at the start, relative to 1/d (keeps the start well inside the LP cone). */
const START_SLACK_FLOOR = 1;
/** A row with at most this share of nonzero entries enters the Schur complement through a sparse product. */
const SPARSE_ROW_DENSITY = 0.25;
/** Relative accuracy of the smallest eigenvalue behind each step length (the lower end is used: conservative). */
const STEP_EIGENVALUE_TOLERANCE = 1e-9;
/** Iterations over which the primal residual must fall by STALL_FACTOR once the gap is closed. */
const STALL_WINDOW = 3;
/** Required fall of the primal residual over STALL_WINDOW iterations before the run counts as stalled. */
const STALL_FACTOR = 0.5;
/** Iterative-refinement passes on each Schur complement solve. */
const REFINEMENT_STEPS = 1;

export interface InteriorPointRows {
  /** Scaled constraint operators A_k (Hermitian, n×n). */
  re: Float64Array[];
  im: Float64Array[];
  /** Right-hand sides b_k. */
  rhs: Float64Array;
  /** Rows 0..orthonormalRows−1 are orthonormal and orthogonal to all other rows, and carry no LP variable. */
  orthonormalRows: number;
  /** For each LP variable: its cone row (−1 for none) and its coefficient there (±1). */
  slackRow: Int32Array;
  slackSign: Float64Array;
  /** Box rows x_s + x_t = w_q: right-hand sides and the two LP variables (s also sits in a cone row, t only here). */
  boxRhs: Float64Array;
  boxFirst: Int32Array;
  boxSecond: Int32Array;
  /** The rows as combinations of tensor products, when every operator behind them is one (cheaper Schur complement). */
  tensor?: TensorRows;
}

export type InteriorPointStatus = 'CONVERGED' | 'STALLED' | 'INFEASIBLE' | 'ITERATION_LIMIT' | 'NUMERICAL_ERROR';

export interface InteriorPointTargets {
  /** Stop when complementarity Tr(XZ) + x·z plus the dual residual norm is at most this (given ⟨C, X⟩). */
  gapTolerance: (primalObjective: number) => number;
  /** … and the primal residual norm ‖b − A(X) − Bx‖₂ is at most this. */
  primalTolerance: number;
  maxIterations: number;
  /** Called with candidate Farkas multipliers y when the dual objective exceeds what any feasible primal allows. */
  certifyInfeasible?: (y: Float64Array) => boolean;
  /** Called at the start of every iteration; throws to abort (never caught here). */
  checkpoint?: () => void;
}

/** Solver state; `solve` continues from the current iterate when `resume` is true. */
export class InteriorPointSolver {
  readonly n: number;
  readonly m: number;
  readonly slackCount: number;
  readonly rows: InteriorPointRows;
  // Objective.
  readonly objectiveRe: Float64Array;
  readonly objectiveIm: Float64Array;
  objectiveNorm = 0;
  // Iterate.
  readonly xRe: Float64Array;
  readonly xIm: Float64Array;
  readonly zRe: Float64Array;
  readonly zIm: Float64Array;
  readonly y: Float64Array;
  readonly slack: Float64Array;
  readonly slackDual: Float64Array;
  /** Duals of the box rows. */
  readonly boxDual: Float64Array;
  iterations = 0;
  primalResidualNorm = Infinity;
  dualResidualNorm = Infinity;
  complementarity = Infinity;
  // Work buffers.
  private readonly lxRe: Float64Array;
  private readonly lxIm: Float64Array;
  private readonly uxRe: Float64Array;
  private readonly uxIm: Float64Array;
  private readonly uzRe: Float64Array;
  private readonly uzIm: Float64Array;
  private readonly zInvRe: Float64Array;
  private readonly zInvIm: Float64Array;
  private readonly rdRe: Float64Array;
  private readonly rdIm: Float64Array;
  private readonly xrzRe: Float64Array;
  private readonly xrzIm: Float64Array;
  private readonly correctionRe: Float64Array;
  private readonly correctionIm: Float64Array;
  private readonly targetRe: Float64Array;
  private readonly targetIm: Float64Array;
  private readonly dxRe: Float64Array;
  private readonly dxIm: Float64Array;
  private readonly dzRe: Float64Array;
  private readonly dzIm: Float64Array;
  private readonly dxAffineRe: Float64Array;
  private readonly dxAffineIm: Float64Array;
  private readonly dzAffineRe: Float64Array;
  private readonly dzAffineIm: Float64Array;
  private readonly tmpRe: Float64Array;
  private readonly tmpIm: Float64Array;
  private readonly tmp2Re: Float64Array;
  private readonly tmp2Im: Float64Array;
  private readonly schurRe: Float64Array;
  private readonly schurIm: Float64Array;
  private readonly schur: Float64Array;
  /** Views of Q_k inside schurRe/schurIm, made once. */
  private readonly schurViewsRe: Float64Array[];
  private readonly schurViewsIm: Float64Array[];
  /** Sparse copies of the rows with few nonzeros (null for dense rows). */
  private readonly sparseRows: (SparseOperator | null)[];
  private readonly schurBackup: Float64Array;
  private readonly primalResidual: Float64Array;
  private readonly rhs: Float64Array;
  private readonly dy: Float64Array;
  private readonly refinement: Float64Array;
  private readonly slackResidual: Float64Array;
  private readonly slackTarget: Float64Array;
  private readonly dSlack: Float64Array;
  private readonly dSlackDual: Float64Array;
  private readonly dSlackAffine: Float64Array;
  private readonly dSlackDualAffine: Float64Array;
  private readonly tridiagonal: TridiagonalWorkspace;
  private readonly boxCount: number;
  /** LP variable → box row (−1 for none); cone row → its LP variable (−1 for none). */
  private readonly boxOfSlack: Int32Array;
  private readonly slackOfRow: Int32Array;
  private readonly boxResidual: Float64Array;
  private readonly boxRight: Float64Array;
  private readonly dBoxDual: Float64Array;
  private readonly residualHistory: Float64Array;
  /** A strictly feasible primal point (X, slacks) to start from, e.g. the analytic centre; null for the default start. */
  primalStart: { xRe: Float64Array; xIm: Float64Array; slack: Float64Array } | null = null;
  /** Every constraint operator is real. */
  private readonly rowsReal: boolean;
  /** Tensor-product structure used for the Schur complement (null: dense products), chosen by estimated cost. */
  private readonly tensor: TensorRows | null;
  private readonly tensorFactors: TensorFactors[] = [];
  /** (O_j·Z⁻¹)ᵀ per tensor operator, and M in the operator basis (p×p) and C·M (m×p). */
  private readonly tensorTransposedRe: Float64Array;
  private readonly tensorTransposedIm: Float64Array;
  private readonly operatorSchur: Float64Array;
  private readonly halfSchur: Float64Array;
  /** The current objective is real too: all iterates stay real and the real kernels run. */
  private realMode = false;
  /** A complex run may have left imaginary parts in the work buffers; cleared before the next real run. */
  private imaginaryDirty = true;

  constructor(n: number, rows: InteriorPointRows) {
    this.n = n;
    this.m = rows.re.length;
    this.slackCount = rows.slackRow.length;
    this.rows = rows;
    const size = n * n;
    const buffer = (): Float64Array => new Float64Array(size);
    this.objectiveRe = buffer();
    this.objectiveIm = buffer();
    this.xRe = buffer();
    this.xIm = buffer();
    this.zRe = buffer();
    this.zIm = buffer();
    this.lxRe = buffer();
    this.lxIm = buffer();
    this.uxRe = buffer();
    this.uxIm = buffer();
    this.uzRe = buffer();
    this.uzIm = buffer();
    this.zInvRe = buffer();
    this.zInvIm = buffer();
    this.rdRe = buffer();
    this.rdIm = buffer();
    this.xrzRe = buffer();
    this.xrzIm = buffer();
    this.correctionRe = buffer();
    this.correctionIm = buffer();
    this.targetRe = buffer();
    this.targetIm = buffer();
    this.dxRe = buffer();
    this.dxIm = buffer();
    this.dzRe = buffer();
    this.dzIm = buffer();
    this.dxAffineRe = buffer();
    this.dxAffineIm = buffer();
    this.dzAffineRe = buffer();
    this.dzAffineIm = buffer();
    this.tmpRe = buffer();
    this.tmpIm = buffer();
    this.tmp2Re = buffer();
    this.tmp2Im = buffer();
    this.schurRe = new Float64Array(this.m * size);
    this.schurIm = new Float64Array(this.m * size);
    this.schur = new Float64Array(this.m * this.m);
    this.tensor = rows.tensor && rows.tensor.leftRe.length === this.m && tensorIsCheaper(n, this.m, rows.tensor, rows.im.every((im) => im.every((x) => x === 0))) ? rows.tensor : null;
    const operatorCount = this.tensor ? this.tensor.leftRe.length : 0;
    if (this.tensor) {
      const t = this.tensor;
      for (let j = 0; j < operatorCount; j++) {
        this.tensorFactors.push({ leftRe: t.leftRe[j], leftIm: t.leftIm[j], rightRe: t.rightRe[j], rightIm: t.rightIm[j] });
      }
    }
    this.tensorTransposedRe = new Float64Array(operatorCount * size);
    this.tensorTransposedIm = new Float64Array(operatorCount * size);
    this.operatorSchur = new Float64Array(operatorCount * operatorCount);
    this.halfSchur = new Float64Array(this.m * operatorCount);
    this.schurViewsRe = Array.from({ length: this.m }, (_, k) => this.schurRe.subarray(k * size, (k + 1) * size));
    this.sparseRows = rows.re.map((re, k) => {
      let count = 0;
      for (let t = 0; t < size; t++) if (re[t] !== 0 || rows.im[k][t] !== 0) count++;
      return count <= SPARSE_ROW_DENSITY * size ? toSparse(re, rows.im[k], n) : null;
    });
    this.schurViewsIm = Array.from({ length: this.m }, (_, k) => this.schurIm.subarray(k * size, (k + 1) * size));
    this.schurBackup = new Float64Array(this.m * this.m);
    this.y = new Float64Array(this.m);
    this.primalResidual = new Float64Array(this.m);
    this.rhs = new Float64Array(this.m);
    this.dy = new Float64Array(this.m);
    this.refinement = new Float64Array(this.m);
    const s = this.slackCount;
    this.slack = new Float64Array(s);
    this.slackDual = new Float64Array(s);
    this.slackResidual = new Float64Array(s);
    this.slackTarget = new Float64Array(s);
    this.dSlack = new Float64Array(s);
    this.dSlackDual = new Float64Array(s);
    this.dSlackAffine = new Float64Array(s);
    this.dSlackDualAffine = new Float64Array(s);
    this.tridiagonal = new TridiagonalWorkspace(n);
    this.boxCount = rows.boxRhs.length;
    this.boxDual = new Float64Array(this.boxCount);
    this.boxResidual = new Float64Array(this.boxCount);
    this.boxRight = new Float64Array(this.boxCount);
    this.dBoxDual = new Float64Array(this.boxCount);
    this.boxOfSlack = new Int32Array(s).fill(-1);
    for (let q = 0; q < this.boxCount; q++) {
      this.boxOfSlack[rows.boxFirst[q]] = q;
      this.boxOfSlack[rows.boxSecond[q]] = q;
    }
    this.slackOfRow = new Int32Array(this.m).fill(-1);
    for (let j = 0; j < s; j++) if (rows.slackRow[j] >= 0) this.slackOfRow[rows.slackRow[j]] = j;
    this.residualHistory = new Float64Array(STALL_WINDOW);
    this.rowsReal = rows.im.every((im) => im.every((x) => x === 0));
  }

  get usesTensorRows(): boolean {
    return this.tensor !== null;
  }

  /** Sets the objective C (Hermitian, copied) and records its Frobenius norm. */
  setObjective(re: Float64Array, im: Float64Array): void {
    this.objectiveRe.set(re);
    this.objectiveIm.set(im);
    this.realMode = this.rowsReal && im.every((x) => x === 0);
    this.objectiveNorm = Math.sqrt(hermitianInner(re, im, re, im));
  }

  /** Standard start: X = 1/n (so Tr X = 1), Z = 1, y = 0, slacks at their value at X (at least a floor), centred duals. */
  private initialize(): void {
    const { n, rows } = this;
    if (this.realMode && this.imaginaryDirty) {
      for (const buffer of this.imaginaryBuffers()) buffer.fill(0);
      this.imaginaryDirty = false;
    }
    if (!this.realMode) this.imaginaryDirty = true;
    this.xRe.fill(0);
    this.xIm.fill(0);
    this.zRe.fill(0);
    this.zIm.fill(0);
    for (let i = 0; i < n; i++) {
      this.xRe[i * n + i] = 1 / n;
      this.zRe[i * n + i] = 1;
    }
    this.y.fill(0);
    this.boxDual.fill(0);
    if (this.primalStart) {
      this.xRe.set(this.primalStart.xRe);
      if (!this.realMode) this.xIm.set(this.primalStart.xIm);
      this.slack.set(this.primalStart.slack);
      // Z = C − λ_min(C)·1 + 1, i.e. y_0 on the identity row E_0 = 1/√n: dual feasible for the cone block.
      this.tmpRe.set(this.objectiveRe);
      this.tmpIm.set(this.objectiveIm);
      const lambda = this.realMode
        ? smallestEigenvalueInPlaceReal(this.tmpRe, n, this.tridiagonal)
        : smallestEigenvalueInPlace(this.tmpRe, this.tmpIm, n, this.tridiagonal);
      const shift = 1 - lambda;
      this.zRe.set(this.objectiveRe);
      this.zIm.set(this.objectiveIm);
      for (let i = 0; i < n; i++) this.zRe[i * n + i] += shift;
      this.y[0] = -shift * Math.sqrt(n);
      for (let j = 0; j < this.slackCount; j++) this.slackDual[j] = 1 / n / this.slack[j];
      this.iterations = 0;
      return;
    }
    const floor = START_SLACK_FLOOR / n;
    for (let j = 0; j < this.slackCount; j++) {
      const k = rows.slackRow[j];
      if (k < 0) continue;
      const value = (rows.rhs[k] - this.rowInner(k, this.xRe, this.xIm)) / rows.slackSign[j];
      this.slack[j] = Math.max(value, floor);
    }
    for (let q = 0; q < this.boxCount; q++) {
      const s = rows.boxFirst[q];
      const t = rows.boxSecond[q];
      const width = rows.boxRhs[q];
      // A narrow interval starts at its midpoint; a wide one at the value at X (kept off the bounds).
      if (width <= 2 * floor) {
        this.slack[s] = width / 2;
        this.slack[t] = width / 2;
      } else {
        this.slack[s] = Math.min(this.slack[s], width - floor);
        this.slack[t] = width - this.slack[s];
      }
    }
    for (let j = 0; j < this.slackCount; j++) this.slackDual[j] = 1 / n / this.slack[j];
    this.iterations = 0;
  }

  solve(targets: InteriorPointTargets, resume: boolean): InteriorPointStatus {
    if (!resume) this.initialize();
    const { n, m, rows } = this;
    const size = n * n;
    const nu = n + this.slackCount;
    const residualHistory = this.residualHistory;
    for (let iteration = 0; iteration < targets.maxIterations; iteration++) {
      targets.checkpoint?.();
      // Residuals.
      let primal2 = 0;
      for (let k = 0; k < m; k++) this.primalResidual[k] = rows.rhs[k] - this.rowInner(k, this.xRe, this.xIm);
      for (let j = 0; j < this.slackCount; j++) {
        if (rows.slackRow[j] >= 0) this.primalResidual[rows.slackRow[j]] -= rows.slackSign[j] * this.slack[j];
      }
      for (let k = 0; k < m; k++) primal2 += this.primalResidual[k] ** 2;
      for (let q = 0; q < this.boxCount; q++) {
        const r = rows.boxRhs[q] - this.slack[rows.boxFirst[q]] - this.slack[rows.boxSecond[q]];
        this.boxResidual[q] = r;
        primal2 += r * r;
      }
      this.rdRe.set(this.objectiveRe);
      this.rdIm.set(this.objectiveIm);
      for (let k = 0; k < m; k++) this.addRowScaled(k, -this.y[k], this.rdRe, this.rdIm);
      let dual2 = 0;
      for (let t = 0; t < size; t++) {
        this.rdRe[t] -= this.zRe[t];
        this.rdIm[t] -= this.zIm[t];
        dual2 += this.rdRe[t] ** 2 + this.rdIm[t] ** 2;
      }
      for (let j = 0; j < this.slackCount; j++) {
        const row = rows.slackRow[j];
        const box = this.boxOfSlack[j];
        const r = -(row >= 0 ? rows.slackSign[j] * this.y[row] : 0) - (box >= 0 ? this.boxDual[box] : 0) - this.slackDual[j];
        this.slackResidual[j] = r;
        dual2 += r * r;
      }
      let gap = hermitianInner(this.xRe, this.xIm, this.zRe, this.zIm);
      for (let j = 0; j < this.slackCount; j++) gap += this.slack[j] * this.slackDual[j];
      this.primalResidualNorm = Math.sqrt(primal2);
      this.dualResidualNorm = Math.sqrt(dual2);
      this.complementarity = gap;
      const primalObjective = hermitianInner(this.objectiveRe, this.objectiveIm, this.xRe, this.xIm);
      const gapMet = gap + this.dualResidualNorm <= targets.gapTolerance(primalObjective);
      if (this.primalResidualNorm <= targets.primalTolerance && gapMet) return 'CONVERGED';
      // Gap closed but the primal residual no longer falls: rounding in the (ill-conditioned) directions sets the floor.
      residualHistory[iteration % STALL_WINDOW] = this.primalResidualNorm;
      if (gapMet && iteration >= STALL_WINDOW) {
        const oldest = residualHistory[(iteration + 1) % STALL_WINDOW];
        if (this.primalResidualNorm > STALL_FACTOR * oldest) return 'STALLED';
      }
      // Z = C − Σ y A − R_d ⪰ 0 bounds λ_max(Σ y A) by ‖C‖ + ‖R_d‖, so b·y above that cannot come from a feasible X.
      if (targets.certifyInfeasible) {
        let dualObjective = 0;
        for (let k = 0; k < m; k++) dualObjective += rows.rhs[k] * this.y[k];
        for (let q = 0; q < this.boxCount; q++) dualObjective += rows.boxRhs[q] * this.boxDual[q];
        if (dualObjective > this.objectiveNorm + this.dualResidualNorm && targets.certifyInfeasible(this.y)) return 'INFEASIBLE';
      }
      const mu = gap / nu;
      // Factorizations: X = L_X L_X†, Z = L_Z L_Z†, U = L⁻¹, Z⁻¹ = U_Z† U_Z.
      this.lxRe.set(this.xRe);
      this.lxIm.set(this.xIm);
      this.tmpRe.set(this.zRe);
      this.tmpIm.set(this.zIm);
      if (this.realMode) {
        if (!choleskyInPlaceReal(this.lxRe, n) || !choleskyInPlaceReal(this.tmpRe, n)) return 'NUMERICAL_ERROR';
        lowerTriangularInverseReal(this.lxRe, n, this.uxRe);
        lowerTriangularInverseReal(this.tmpRe, n, this.uzRe);
        lowerGramReal(this.uzRe, n, this.zInvRe);
      } else {
        if (!choleskyInPlace(this.lxRe, this.lxIm, n) || !choleskyInPlace(this.tmpRe, this.tmpIm, n)) return 'NUMERICAL_ERROR';
        lowerTriangularInverse(this.lxRe, this.lxIm, n, this.uxRe, this.uxIm);
        lowerTriangularInverse(this.tmpRe, this.tmpIm, n, this.uzRe, this.uzIm);
        lowerGram(this.uzRe, this.uzIm, n, this.zInvRe, this.zInvIm);
      }
      if (!this.assembleSchur()) return 'NUMERICAL_ERROR';
      // X·R_d·Z⁻¹ (Hermitian part) enters both right-hand sides.
      // Even a rounding-level R_d matters here: Z⁻¹ is huge late in the run.
      if (this.dualResidualNorm > 0) {
        this.productWithHermitian(this.xRe, this.xIm, this.rdRe, this.rdIm, this.tmpRe, this.tmpIm);
        this.productWithHermitian(this.tmpRe, this.tmpIm, this.zInvRe, this.zInvIm, this.xrzRe, this.xrzIm);
        hermitianPartInPlace(this.xrzRe, this.xrzIm, n);
      } else {
        this.xrzRe.fill(0);
        this.xrzIm.fill(0);
      }
      // Predictor (σ = 0).
      this.computeDirection(0, false);
      const primalStepAffine = Math.min(1, this.maxPrimalStep());
      const dualStepAffine = Math.min(1, this.maxDualStep());
      // µ after the affine step.
      let affineGap = 0;
      for (let t = 0; t < size; t++) {
        this.tmpRe[t] = this.xRe[t] + primalStepAffine * this.dxRe[t];
        this.tmpIm[t] = this.xIm[t] + primalStepAffine * this.dxIm[t];
        this.tmp2Re[t] = this.zRe[t] + dualStepAffine * this.dzRe[t];
        this.tmp2Im[t] = this.zIm[t] + dualStepAffine * this.dzIm[t];
      }
      affineGap = hermitianInner(this.tmpRe, this.tmpIm, this.tmp2Re, this.tmp2Im);
      for (let j = 0; j < this.slackCount; j++) {
        affineGap += (this.slack[j] + primalStepAffine * this.dSlack[j]) * (this.slackDual[j] + dualStepAffine * this.dSlackDual[j]);
      }
      const ratio = Math.max(0, Math.min(1, affineGap / gap));
      const sigma = ratio ** CENTRING_EXPONENT;
      // Corrector: second-order term dX_a·dZ_a·Z⁻¹ (Hermitian part).
      this.dxAffineRe.set(this.dxRe);
      this.dxAffineIm.set(this.dxIm);
      this.dzAffineRe.set(this.dzRe);
      this.dzAffineIm.set(this.dzIm);
      this.dSlackAffine.set(this.dSlack);
      this.dSlackDualAffine.set(this.dSlackDual);
      this.productWithHermitian(this.dxAffineRe, this.dxAffineIm, this.dzAffineRe, this.dzAffineIm, this.tmpRe, this.tmpIm);
      this.productWithHermitian(this.tmpRe, this.tmpIm, this.zInvRe, this.zInvIm, this.correctionRe, this.correctionIm);
      hermitianPartInPlace(this.correctionRe, this.correctionIm, n);
      this.computeDirection(sigma * mu, true);
      this.restoreLinearization();
      const fraction = BASE_STEP_FRACTION + ADAPTIVE_STEP_FRACTION * Math.min(primalStepAffine, dualStepAffine);
      const primalStep = Math.min(1, fraction * this.maxPrimalStep());
      const dualStep = Math.min(1, fraction * this.maxDualStep());
      if (!(primalStep > 0) || !(dualStep > 0)) return 'NUMERICAL_ERROR';
      for (let t = 0; t < size; t++) {
        this.xRe[t] += primalStep * this.dxRe[t];
        this.xIm[t] += primalStep * this.dxIm[t];
        this.zRe[t] += dualStep * this.dzRe[t];
        this.zIm[t] += dualStep * this.dzIm[t];
      }
      hermitianPartInPlace(this.xRe, this.xIm, n);
      hermitianPartInPlace(this.zRe, this.zIm, n);
      for (let j = 0; j < this.slackCount; j++) {
        this.slack[j] += primalStep * this.dSlack[j];
        this.slackDual[j] += dualStep * this.dSlackDual[j];
      }
      for (let k = 0; k < m; k++) this.y[k] += dualStep * this.dy[k];
      for (let q = 0; q < this.boxCount; q++) this.boxDual[q] += dualStep * this.dBoxDual[q];
      this.iterations++;
    }
    return 'ITERATION_LIMIT';
  }

  private imaginaryBuffers(): Float64Array[] {
    return [
      this.xIm,
      this.zIm,
      this.lxIm,
      this.uxIm,
      this.uzIm,
      this.zInvIm,
      this.rdIm,
      this.xrzIm,
      this.correctionIm,
      this.targetIm,
      this.dxIm,
      this.dzIm,
      this.dxAffineIm,
      this.dzAffineIm,
      this.tmpIm,
      this.tmp2Im,
      this.schurIm,
    ];
  }

  /** out = A·B for Hermitian B, in real arithmetic when every iterate is real. */
  private productWithHermitian(
    aRe: Float64Array,
    aIm: Float64Array,
    bRe: Float64Array,
    bIm: Float64Array,
    outRe: Float64Array,
    outIm: Float64Array,
  ): void {
    pollAtOrder(this.n);
    if (this.realMode) multiplyBySymmetricReal(aRe, bRe, this.n, outRe);
    else multiplyByHermitian(aRe, aIm, bRe, bIm, this.n, outRe, outIm);
  }

  /** {@link assembleSchur} for real data: Q_k = U_Z·A_k·L_X and M = Gram(Q) in real arithmetic (L_Xᵀ in tmp2Re). */
  private assembleSchurReal(): boolean {
    const { n, m, rows } = this;
    const size = n * n;
    for (let k = 0; k < m; k++) {
      pollAtOrder(n);
      const sparse = this.sparseRows[k];
      if (sparse) transposedSparseProductWithLowerReal(sparse, this.lxRe, n, this.tmpRe);
      else transposedProductWithLowerReal(rows.re[k], this.tmp2Re, n, this.tmpRe);
      lowerTimesTransposedReal(this.uzRe, this.tmpRe, n, this.schurViewsRe[k]);
    }
    blockedPairSums(this.schurRe, null, this.schurRe, null, 1, m, size, this.schur);
    return this.finishSchur();
  }

  /** Re Tr(A_k·H) for Hermitian H, over the nonzeros of A_k when it is sparse. */
  private rowInner(k: number, hRe: Float64Array, hIm: Float64Array): number {
    const sparse = this.sparseRows[k];
    if (!sparse) return hermitianInner(this.rows.re[k], this.rows.im[k], hRe, hIm);
    const { rowStart, columns, re, im } = sparse;
    const n = this.n;
    let sum = 0;
    for (let i = 0; i < n; i++) {
      for (let p = rowStart[i]; p < rowStart[i + 1]; p++) {
        const t = i * n + columns[p];
        sum += re[p] * hRe[t] + im[p] * hIm[t];
      }
    }
    return sum;
  }

  /** H += c·A_k. */
  private addRowScaled(k: number, c: number, hRe: Float64Array, hIm: Float64Array): void {
    if (c === 0) return;
    const sparse = this.sparseRows[k];
    if (!sparse) {
      const aRe = this.rows.re[k];
      const aIm = this.rows.im[k];
      for (let t = 0; t < aRe.length; t++) {
        hRe[t] += c * aRe[t];
        hIm[t] += c * aIm[t];
      }
      return;
    }
    const { rowStart, columns, re, im } = sparse;
    const n = this.n;
    for (let i = 0; i < n; i++) {
      for (let p = rowStart[i]; p < rowStart[i + 1]; p++) {
        const t = i * n + columns[p];
        hRe[t] += c * re[p];
        hIm[t] += c * im[p];
      }
    }
  }

  /** Schur complement M_ik = Re Tr(A_i X A_k Z⁻¹) = Re⟨Q_i, Q_k⟩ with Q_k = U_Z A_k L_X, plus the LP block x_j/z_j. */
  private assembleSchur(): boolean {
    const { n, m, rows } = this;
    const size = n * n;
    if (this.tensor) return this.assembleSchurTensor(this.tensor);
    transposeInto(this.lxRe, this.lxIm, n, this.tmp2Re, this.tmp2Im);
    if (this.realMode) return this.assembleSchurReal();
    for (let k = 0; k < m; k++) {
      pollAtOrder(n);
      const sparse = this.sparseRows[k];
      if (sparse) {
        transposedSparseProductWithLower(sparse, this.lxRe, this.lxIm, n, this.tmpRe, this.tmpIm);
        lowerTimesTransposed(this.uzRe, this.uzIm, this.tmpRe, this.tmpIm, n, this.schurViewsRe[k], this.schurViewsIm[k]);
        continue;
      }
      lowerCongruence(
        rows.re[k],
        rows.im[k],
        this.tmp2Re,
        this.tmp2Im,
        this.uzRe,
        this.uzIm,
        n,
        this.tmpRe,
        this.tmpIm,
        this.schurViewsRe[k],
        this.schurViewsIm[k],
      );
    }
    blockedPairSums(this.schurRe, this.schurIm, this.schurRe, this.schurIm, 1, m, size, this.schur);
    return this.finishSchur();
  }

  /**
   * {@link assembleSchur} from tensor-product operators O_j = P_j ⊗ Q_j (SDPA-style formula, Fujisawa, Kojima &
   * Nakata 1997): M^O_jl = Re Tr(O_j X O_l Z⁻¹) = Re Σ_ab (O_j X)_ab (O_l Z⁻¹)_ba, then M = C·M^O·Cᵀ for the rows
   * k = Σ_j C_kj O_j. Each O·Y costs n²(d_A + d_B) complex products; real iterates simply carry zero imaginary parts.
   */
  private assembleSchurTensor(tensor: TensorRows): boolean {
    const { n, m } = this;
    const size = n * n;
    const a = tensor.dimensionA;
    const b = tensor.dimensionB;
    const p = this.tensorFactors.length;
    const tRe = this.tensorTransposedRe;
    const tIm = this.tensorTransposedIm;
    // (O_l Z⁻¹)ᵀ for every l.
    for (let l = 0; l < p; l++) {
      pollAtOrder(n);
      applyTensorLeft(this.tensorFactors[l], a, b, this.zInvRe, this.zInvIm, this.tmpRe, this.tmpIm, this.tmp2Re, this.tmp2Im);
      const offset = l * size;
      for (let i = 0; i < n; i++) {
        for (let c = 0; c < n; c++) {
          tRe[offset + c * n + i] = this.tmp2Re[i * n + c];
          tIm[offset + c * n + i] = this.tmp2Im[i * n + c];
        }
      }
    }
    // O_j·X for every j (in the dense path's Q buffers), then all pairs at once.
    for (let j = 0; j < p; j++) {
      pollAtOrder(n);
      applyTensorLeft(this.tensorFactors[j], a, b, this.xRe, this.xIm, this.tmpRe, this.tmpIm, this.schurViewsRe[j], this.schurViewsIm[j]);
    }
    const basis = this.operatorSchur;
    blockedPairSums(this.schurRe, this.schurIm, tRe, tIm, -1, p, size, basis);
    // M = C·M^O·Cᵀ.
    const combination = tensor.combination;
    const half = this.halfSchur;
    half.fill(0);
    for (let k = 0; k < m; k++) {
      for (let j = 0; j < p; j++) {
        const c = combination[k * p + j];
        if (c === 0) continue;
        for (let l = 0; l < p; l++) half[k * p + l] += c * basis[j * p + l];
      }
    }
    const M = this.schur;
    for (let k = 0; k < m; k++) {
      for (let i = 0; i <= k; i++) {
        let sum = 0;
        for (let l = 0; l < p; l++) sum += half[k * p + l] * combination[i * p + l];
        M[k * m + i] = sum;
        M[i * m + k] = sum;
      }
    }
    return this.finishSchur();
  }

  /** Adds the LP block to the Gram part of the Schur complement, eliminates the box rows and factors it. */
  private finishSchur(): boolean {
    const { m, rows } = this;
    const M = this.schur;
    for (let j = 0; j < this.slackCount; j++) {
      const k = rows.slackRow[j];
      if (k >= 0) M[k * m + k] += this.slack[j] / this.slackDual[j];
    }
    // Eliminating box row q (diagonal D_s + D_t, coupling sign_s·D_s to the cone row of s).
    for (let q = 0; q < this.boxCount; q++) {
      const first = rows.boxFirst[q];
      const second = rows.boxSecond[q];
      const dFirst = this.slack[first] / this.slackDual[first];
      const dSecond = this.slack[second] / this.slackDual[second];
      const k = rows.slackRow[first];
      // D_s − D_s²/(D_s + D_t) = D_s·D_t/(D_s + D_t), written without cancellation.
      M[k * m + k] += (dFirst * dSecond) / (dFirst + dSecond) - dFirst;
    }
    let largestDiagonal = 0;
    for (let k = 0; k < m; k++) largestDiagonal = Math.max(largestDiagonal, M[k * m + k]);
    // Kept so that a failed factorization can be retried with a small diagonal shift.
    this.schurBackup.set(M);
    if (choleskyInPlaceReal(M, m)) return true;
    M.set(this.schurBackup);
    for (let k = 0; k < m; k++) M[k * m + k] += SCHUR_REGULARIZATION * largestDiagonal;
    return choleskyInPlaceReal(M, m);
  }

  /**
   * HKM direction for target σµ. Without correction: predictor/plain; with: subtracts the second-order term.
   * Fills dX, dZ, dy, dx, dz.
   */
  private computeDirection(sigmaMu: number, corrected: boolean): void {
    const { n, m, rows } = this;
    const size = n * n;
    // T = σµ Z⁻¹ − X − herm(X R_d Z⁻¹) − [correction]
    const { zInvRe, zInvIm, xRe, xIm, xrzRe, xrzIm, correctionRe, correctionIm, targetRe, targetIm } = this;
    const correction = corrected ? 1 : 0;
    for (let t = 0; t < size; t++) {
      targetRe[t] = sigmaMu * zInvRe[t] - xRe[t] - xrzRe[t] - correction * correctionRe[t];
      targetIm[t] = sigmaMu * zInvIm[t] - xIm[t] - xrzIm[t] - correction * correctionIm[t];
    }
    for (let j = 0; j < this.slackCount; j++) {
      const x = this.slack[j];
      const z = this.slackDual[j];
      const second = corrected ? this.dSlackAffine[j] * this.dSlackDualAffine[j] : 0;
      this.slackTarget[j] = (sigmaMu - x * z - second) / z - (x / z) * this.slackResidual[j];
    }
    for (let k = 0; k < m; k++) this.rhs[k] = this.primalResidual[k] - this.rowInner(k, this.targetRe, this.targetIm);
    for (let j = 0; j < this.slackCount; j++) {
      if (rows.slackRow[j] >= 0) this.rhs[rows.slackRow[j]] -= rows.slackSign[j] * this.slackTarget[j];
    }
    for (let q = 0; q < this.boxCount; q++) {
      const first = rows.boxFirst[q];
      const second = rows.boxSecond[q];
      this.boxRight[q] = this.boxResidual[q] - this.slackTarget[first] - this.slackTarget[second];
      const dFirst = this.slack[first] / this.slackDual[first];
      const dSecond = this.slack[second] / this.slackDual[second];
      this.rhs[rows.slackRow[first]] -= (rows.slackSign[first] * dFirst * this.boxRight[q]) / (dFirst + dSecond);
    }
    this.dy.set(this.rhs);
    realCholeskySolveInPlace(this.schur, m, this.dy);
    // Iterative refinement against the assembled (unfactored) Schur complement: near the boundary M is ill-conditioned
    // and an unrefined solve leaves a primal residual floor far above rounding.
    for (let pass = 0; pass < REFINEMENT_STEPS; pass++) {
      const backup = this.schurBackup;
      for (let i = 0; i < m; i++) {
        let r = this.rhs[i];
        for (let k = 0; k < m; k++) r -= backup[i * m + k] * this.dy[k];
        this.refinement[i] = r;
      }
      realCholeskySolveInPlace(this.schur, m, this.refinement);
      for (let i = 0; i < m; i++) this.dy[i] += this.refinement[i];
    }
    // dZ = R_d − Σ dy A; dz = r_dl − Bᵀ dy.
    this.dzRe.set(this.rdRe);
    this.dzIm.set(this.rdIm);
    for (let k = 0; k < m; k++) this.addRowScaled(k, -this.dy[k], this.dzRe, this.dzIm);
    for (let q = 0; q < this.boxCount; q++) {
      const first = rows.boxFirst[q];
      const second = rows.boxSecond[q];
      const dFirst = this.slack[first] / this.slackDual[first];
      const dSecond = this.slack[second] / this.slackDual[second];
      this.dBoxDual[q] = (this.boxRight[q] - rows.slackSign[first] * dFirst * this.dy[rows.slackRow[first]]) / (dFirst + dSecond);
    }
    for (let j = 0; j < this.slackCount; j++) {
      const row = rows.slackRow[j];
      const box = this.boxOfSlack[j];
      this.dSlackDual[j] = this.slackResidual[j] - (row >= 0 ? rows.slackSign[j] * this.dy[row] : 0) - (box >= 0 ? this.dBoxDual[box] : 0);
    }
    // dX = σµ Z⁻¹ − X − herm(X dZ Z⁻¹) − [correction]
    this.productWithHermitian(this.xRe, this.xIm, this.dzRe, this.dzIm, this.tmpRe, this.tmpIm);
    this.productWithHermitian(this.tmpRe, this.tmpIm, this.zInvRe, this.zInvIm, this.dxRe, this.dxIm);
    hermitianPartInPlace(this.dxRe, this.dxIm, n);
    const { dxRe, dxIm } = this;
    for (let t = 0; t < size; t++) {
      dxRe[t] = sigmaMu * zInvRe[t] - xRe[t] - dxRe[t] - correction * correctionRe[t];
      dxIm[t] = sigmaMu * zInvIm[t] - xIm[t] - dxIm[t] - correction * correctionIm[t];
    }
    for (let j = 0; j < this.slackCount; j++) {
      const x = this.slack[j];
      const z = this.slackDual[j];
      const second = corrected ? this.dSlackAffine[j] * this.dSlackDualAffine[j] : 0;
      this.dSlack[j] = (sigmaMu - x * z - second) / z - (x / z) * this.dSlackDual[j];
    }
  }

  /**
   * Rounding in dX (through the ill-conditioned Z⁻¹ late in the run) breaks A(dX) + B·dx = r_p and leaves a primal
   * residual floor. Put the defect back: along the orthonormal rows into dX, on the other rows into their LP variable.
   */
  private restoreLinearization(): void {
    const { m, rows } = this;
    for (let k = 0; k < m; k++) this.refinement[k] = this.primalResidual[k] - this.rowInner(k, this.dxRe, this.dxIm);
    for (let j = 0; j < this.slackCount; j++) {
      if (rows.slackRow[j] >= 0) this.refinement[rows.slackRow[j]] -= rows.slackSign[j] * this.dSlack[j];
    }
    for (let k = 0; k < rows.orthonormalRows; k++) this.addRowScaled(k, this.refinement[k], this.dxRe, this.dxIm);
    for (let k = rows.orthonormalRows; k < m; k++) {
      const j = this.slackOfRow[k];
      if (j >= 0) this.dSlack[j] += rows.slackSign[j] * this.refinement[k];
    }
    // Box rows last: their second variable appears nowhere else.
    for (let q = 0; q < this.boxCount; q++) {
      const first = rows.boxFirst[q];
      const second = rows.boxSecond[q];
      this.dSlack[second] += this.boxResidual[q] - this.dSlack[first] - this.dSlack[second];
    }
  }

  /** Largest α with X + α dX ⪰ 0 and x + α dx ≥ 0 (Infinity when unbounded). */
  private maxPrimalStep(): number {
    let step = this.coneStep(this.uxRe, this.uxIm, this.dxRe, this.dxIm);
    for (let j = 0; j < this.slackCount; j++) {
      if (this.dSlack[j] < 0) step = Math.min(step, -this.slack[j] / this.dSlack[j]);
    }
    return step;
  }

  private maxDualStep(): number {
    let step = this.coneStep(this.uzRe, this.uzIm, this.dzRe, this.dzIm);
    for (let j = 0; j < this.slackCount; j++) {
      if (this.dSlackDual[j] < 0) step = Math.min(step, -this.slackDual[j] / this.dSlackDual[j]);
    }
    return step;
  }

  /** With U = L⁻¹ for the current factor L of the cone variable: −1/λ_min(U·D·U†), or Infinity when λ_min ≥ 0. */
  private coneStep(uRe: Float64Array, uIm: Float64Array, dRe: Float64Array, dIm: Float64Array): number {
    const n = this.n;
    pollAtOrder(n);
    if (this.realMode) {
      lowerCongruenceSymmetricReal(uRe, dRe, n, this.tmpRe, this.tmp2Re);
      const lambdaReal = smallestEigenvalueInPlaceReal(this.tmp2Re, n, this.tridiagonal, STEP_EIGENVALUE_TOLERANCE, 0);
      return lambdaReal >= 0 ? Infinity : -1 / lambdaReal;
    }
    multiplyByLowerLeft(uRe, uIm, dRe, dIm, n, this.tmpRe, this.tmpIm);
    multiplyByLowerAdjointRightHermitian(this.tmpRe, this.tmpIm, uRe, uIm, n, this.tmp2Re, this.tmp2Im);
    pollAtOrder(n);
    // Only a negative λ_min limits the step, and a relative 1e-9 is far finer than the step fraction needs.
    const lambda = smallestEigenvalueInPlace(this.tmp2Re, this.tmp2Im, n, this.tridiagonal, STEP_EIGENVALUE_TOLERANCE, 0);
    return lambda >= 0 ? Infinity : -1 / lambda;
  }
}

/**
 * Whether the tensor-product Schur complement costs fewer real multiply–adds than the dense one: dense 4·m·n³ + m²n²
 * (complex; m·n³ + m²n²/2 for real rows), tensor 8·p·n²(d_A + d_B) + p²n² + m·p·(m + p).
 */
function tensorIsCheaper(n: number, m: number, tensor: TensorRows, realRows: boolean): boolean {
  const p = tensor.leftRe.length;
  const n2 = n * n;
  const dense = realRows ? m * n2 * n + (m * m * n2) / 2 : 4 * m * n2 * n + m * m * n2;
  const structured = 8 * p * n2 * (tensor.dimensionA + tensor.dimensionB) + p * p * n2 + m * p * (m + p);
  return structured < dense;
}
