import {
  ComplexMatrix,
  conjugate,
  conjugateAdjoint,
  frobeniusNorm,
  kron,
  multiply,
  columns,
} from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import { rangeIsometry } from '../linear-algebra/support.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import { ValidationError } from './errors.js';
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
  exposures.forEach((exposure, k) => {
    checkpoint?.();
    const keep = exposedKernel(problem, isometry, exposure, `exposures[${k}]`);
    isometry = isometry ? multiply(isometry, keep) : keep;
    reasons.push(`exposing direction ${k} (a positive semidefinite combination of equalities) confines ρ to a face of dimension ${keep.cols}`);
  });
  return { isometry, dimension: isometry ? isometry.cols : d, reasons, exposures: exposures.map((e) => ({ multipliers: [...e.multipliers] })) };
}

/**
 * Z = Σ y_i (b_i·1 − Γ_i) on the current face P (P†ZP), checked positive semidefinite to rounding, and its
 * kernel: eigenvalues within the rounding level of Σ|y_i|(‖Γ_i‖_F + |b_i|·√n) count as zero.
 */
function exposedKernel(problem: Problem, isometry: ComplexMatrix | null, exposure: FaceExposure, field: string): ComplexMatrix {
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
  return columns(vectors, 0, count);
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

