// The zero-entropy test: is there a feasible state at which the eavesdropper knows the key, so that F reaches the
// trivial bound? Such optima lie on the boundary of the cone, where Frank–Wolfe crawls; the test finds one with a
// single semidefinite feasibility problem (docs/convergence.md, "Optima at the trivial bound").
import {
  addScaledInPlace,
  ComplexMatrix,
  hermitianPart,
  multiplyAdjointLeft,
  trace,
  type ComplexMatrix as Matrix,
} from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import { LinearOracle } from '../oracle/index.js';
import type { Checkpoint } from '../oracle/types.js';
import type { AnnouncementBranch, LinearConstraint, Problem } from '../problem/model.js';

/**
 * Linear equalities Tr(Γρ) = 0 that hold exactly at the states where every kind served here equals the trivial
 * bound −max_c f(c): branches scored below the maximum carry no weight (Tr X_c = 0), and in every other branch with
 * a key the output is block diagonal in the key map (X_c = Z(X_c)), so D(X_c‖Z(X_c)) = 0 and Q(X_c‖Z(X_c)) = Tr X_c.
 */
export function zeroEntropyConstraints(problem: Problem, dimension: number): LinearConstraint[] {
  const highest = problem.branches.reduce((m, b) => Math.max(m, b.score), -Infinity);
  const out: LinearConstraint[] = [];
  problem.branches.forEach((branch) => {
    if (branch.score < highest) {
      const weight = ComplexMatrix.zeros(dimension);
      for (const k of branch.krausOperators) addScaledInPlace(weight, multiplyAdjointLeft(k, k), 1);
      out.push({ label: `zero-entropy:${branch.label}:weight`, operator: hermitianPart(weight), lower: 0, upper: 0 });
      return;
    }
    if (branch.keyProjectors.length > 1) out.push(...offBlockConstraints(branch));
  });
  return out;
}

/** Re and Im of ⟨u|X_c|v⟩ for orthonormal u, v in the ranges of different key projectors. */
function offBlockConstraints(branch: AnnouncementBranch): LinearConstraint[] {
  const ranges = branch.keyProjectors.map(rangeBasis);
  // Pulled back to H: ⟨u|K ρ K†|v⟩ = Tr(ρ·(K†v)(K†u)†), summed over the Kraus operators.
  const pulled = ranges.map((vectors) => vectors.map((w) => branch.krausOperators.map((k) => conjugateAdjointVector(k, w))));
  const out: LinearConstraint[] = [];
  for (let a = 0; a < ranges.length; a++) {
    for (let b = a + 1; b < ranges.length; b++) {
      pulled[a].forEach((us, i) => {
        pulled[b].forEach((vs, j) => {
          const [re, im] = realAndImaginaryParts(us, vs);
          const label = `zero-entropy:${branch.label}:${a}${b}:${i},${j}`;
          out.push({ label: `${label}:re`, operator: re, lower: 0, upper: 0 });
          out.push({ label: `${label}:im`, operator: im, lower: 0, upper: 0 });
        });
      });
    }
  }
  return out;
}

/** Orthonormal vectors spanning the range of a projector. */
function rangeBasis(projector: Matrix): Float64Array[][] {
  const { values, vectors } = eigh(projector);
  const n = values.length;
  const out: Float64Array[][] = [];
  for (let j = 0; j < n; j++) {
    if (values[j] < 0.5) continue;
    const re = new Float64Array(n);
    const im = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      re[i] = vectors.re[i * n + j];
      im[i] = vectors.im[i * n + j];
    }
    out.push([re, im]);
  }
  return out;
}

/** K†w for a column vector w given as [re, im]. */
function conjugateAdjointVector(k: Matrix, [wRe, wIm]: Float64Array[]): Float64Array[] {
  const re = new Float64Array(k.cols);
  const im = new Float64Array(k.cols);
  for (let i = 0; i < k.rows; i++) {
    for (let j = 0; j < k.cols; j++) {
      // conj(K_ij)·w_i
      const a = k.re[i * k.cols + j];
      const b = -k.im[i * k.cols + j];
      re[j] += a * wRe[i] - b * wIm[i];
      im[j] += a * wIm[i] + b * wRe[i];
    }
  }
  return [re, im];
}

/** M = Σ_j q_j·p_j† with p_j = K_j†u, q_j = K_j†v: Tr(ρM) = ⟨u|X|v⟩; returns (M + M†)/2 and (M − M†)/(2i). */
function realAndImaginaryParts(us: Float64Array[][], vs: Float64Array[][]): [Matrix, Matrix] {
  const n = us[0][0].length;
  const m = ComplexMatrix.zeros(n);
  us.forEach(([pRe, pIm], t) => {
    const [qRe, qIm] = vs[t];
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        // q_i·conj(p_j)
        m.re[i * n + j] += qRe[i] * pRe[j] + qIm[i] * pIm[j];
        m.im[i * n + j] += qIm[i] * pRe[j] - qRe[i] * pIm[j];
      }
    }
  });
  const im = ComplexMatrix.zeros(n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const ij = i * n + j;
      const ji = j * n + i;
      // (M − M†)/(2i): entries (m_ij − conj(m_ji))/(2i)
      const dRe = m.re[ij] - m.re[ji];
      const dIm = m.im[ij] + m.im[ji];
      im.re[ij] = dIm / 2;
      im.im[ij] = -dRe / 2;
    }
  }
  return [hermitianPart(m), im];
}

/**
 * Constraints the feasibility problem may have: its interior-point cost grows like their number squared times d³
 * (measured: 226 constraints at d = 16 take about 1 s), so larger instances are not tried.
 */
export const ZERO_ENTROPY_MAX_CONSTRAINTS = 400;

/** How many equalities zeroEntropyConstraints would return, without building them. */
export function zeroEntropyConstraintCount(problem: Problem): number {
  const highest = problem.branches.reduce((m, b) => Math.max(m, b.score), -Infinity);
  return problem.branches.reduce((total, branch) => {
    if (branch.score < highest) return total + 1;
    const ranks = branch.keyProjectors.map((p) => Math.round(trace(p).re));
    let pairs = 0;
    for (let a = 0; a < ranks.length; a++) for (let b = a + 1; b < ranks.length; b++) pairs += ranks[a] * ranks[b];
    return total + 2 * pairs;
  }, 0);
}

/**
 * A feasible state of `problem` meeting the zero-entropy equalities (the analytic centre of that set, from the
 * oracle's feasibility run), or null when there is none or the run does not decide.
 */
export function zeroEntropyState(problem: Problem, dimension: number, checkpoint?: Checkpoint): ComplexMatrix | null {
  const count = zeroEntropyConstraintCount(problem);
  if (count === 0 || count + problem.constraints.length > ZERO_ENTROPY_MAX_CONSTRAINTS) return null;
  const extra = zeroEntropyConstraints(problem, dimension);
  const oracle = new LinearOracle(dimension, [...problem.constraints, ...extra], { relativeAccuracy: 1e-9, checkpoint });
  const found = oracle.findFeasiblePoint();
  return found.status === 'OPTIMAL' && found.point ? hermitianPart(found.point) : null;
}
