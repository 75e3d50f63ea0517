// The zero-entropy test: is there a feasible state at which the eavesdropper knows the key, so that F reaches the
// trivial bound? Such optima lie on the boundary of the cone, where Frank–Wolfe crawls; the test finds one with a
// single semidefinite feasibility problem (docs/convergence.md, "Optima at the trivial bound").
import {
  add,
  addScaledInPlace,
  ComplexMatrix,
  concatColumns,
  conjugate,
  conjugateAdjoint,
  diagonalBlock,
  directSum,
  frobeniusNorm,
  hermitianPart,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  subtract,
  trace,
  type ComplexMatrix as Matrix,
} from '../linear-algebra/complex-matrix.js';
import { eigh } from '../linear-algebra/eigen.js';
import { spectralFunction } from '../linear-algebra/matrix-functions.js';
import { kernelIsometry, rangeIsometry } from '../linear-algebra/support.js';
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

/** Smallest ratio λ_min/λ_max of K†K at which the block form is used. */
const KRAUS_CONDITION_FLOOR = 1e-8;

/**
 * The zero-entropy states in closed form when every branch has the highest score and the key sits in one branch with a
 * single injective Kraus operator K and key projectors summing to the identity: X = KρK† is block diagonal with range
 * in range K, so each block P_a·X·P_a lives on range P_a ∩ range K and ρ = K⁺XK⁺†. Returns V = [V_1 | … | V_A],
 * each V_a orthonormal (not across blocks), with ρ = Σ_a V_a σ_a V_a† (σ_a ≥ 0) exactly the zero-entropy states and
 * Tr ρ = Σ_a Tr σ_a; null when the problem is not of that shape.
 */
export function keyBlockBasis(problem: Problem, dimension: number): { basis: Matrix; sizes: number[] } | null {
  const highest = problem.branches.reduce((m, b) => Math.max(m, b.score), -Infinity);
  if (problem.branches.some((b) => b.score < highest)) return null;
  const keyed = problem.branches.filter((b) => b.keyProjectors.length > 1);
  if (keyed.length !== 1 || keyed[0].krausOperators.length !== 1) return null;
  const [k] = keyed[0].krausOperators;
  if (k.cols !== dimension) return null;
  const gram = eigh(multiplyAdjointLeft(k, k));
  // K⁺ loses ~log10(cond K†K) digits: the block form is used only where K is well conditioned.
  if (!(gram.values[0] > KRAUS_CONDITION_FLOOR * gram.values[dimension - 1])) return null;
  const outputs = k.rows;
  const total = ComplexMatrix.zeros(outputs);
  for (const p of keyed[0].keyProjectors) addScaledInPlace(total, p, 1);
  if (frobeniusNorm(subtract(total, ComplexMatrix.identity(outputs))) > 1e-10 * outputs) return null;
  // Projector onto the orthogonal complement of range K, and K⁺ = (K†K)⁻¹K†.
  const cokernel = kernelIsometry(hermitianPart(multiplyAdjointRight(k, k)));
  const outside = multiplyAdjointRight(cokernel, cokernel);
  const pseudoInverse = multiplyAdjointRight(spectralFunction(gram, (x) => 1 / x), k);
  const blocks: Matrix[] = [];
  for (const p of keyed[0].keyProjectors) {
    // range P ∩ range K is the kernel of (I − P) + (I − Q_K), a sum of two projectors.
    const shared = kernelIsometry(hermitianPart(add(subtract(ComplexMatrix.identity(outputs), p), outside)));
    if (shared.cols === 0) continue;
    const preimage = multiply(pseudoInverse, shared);
    const block = rangeIsometry(hermitianPart(multiplyAdjointRight(preimage, preimage)));
    if (block.cols !== shared.cols) return null;
    blocks.push(block);
  }
  if (blocks.length === 0) return null;
  return { basis: concatColumns(blocks, dimension), sizes: blocks.map((b) => b.cols) };
}

/** The diagonal blocks of a square matrix, as a direct sum (the pinching: it keeps PSD and the trace). */
function pinch(a: Matrix, sizes: readonly number[]): Matrix {
  let start = 0;
  return directSum(
    sizes.map((size) => {
      const block = diagonalBlock(a, start, size);
      start += size;
      return block;
    }),
  );
}

/**
 * A feasible state of `problem` meeting the zero-entropy equalities (the analytic centre of that set, from the
 * oracle's feasibility run), or null when there is none or the run does not decide. Where keyBlockBasis applies,
 * the run is over the block-diagonal σ with the problem's constraints pulled back (d = 32, seed 2 of the suite:
 * 52 constraints at size 29 instead of 868 at size 32); the set is invariant under phases on the blocks, so its
 * analytic centre is block diagonal, and the pinching only removes rounding.
 */
export function zeroEntropyState(problem: Problem, dimension: number, checkpoint?: Checkpoint): ComplexMatrix | null {
  const reduced = keyBlockBasis(problem, dimension);
  if (reduced) {
    const { basis, sizes } = reduced;
    const pulledBack = problem.constraints.map((c) => ({
      label: c.label,
      operator: pinch(hermitianPart(conjugateAdjoint(basis, c.operator)), sizes),
      lower: c.lower,
      upper: c.upper,
    }));
    const found = new LinearOracle(basis.cols, pulledBack, { relativeAccuracy: 1e-9, checkpoint }).findFeasiblePoint();
    if (found.status !== 'OPTIMAL' || !found.point) return null;
    return hermitianPart(conjugate(basis, pinch(hermitianPart(found.point), sizes)));
  }
  const count = zeroEntropyConstraintCount(problem);
  if (count === 0 || count + problem.constraints.length > ZERO_ENTROPY_MAX_CONSTRAINTS) return null;
  const extra = zeroEntropyConstraints(problem, dimension);
  const oracle = new LinearOracle(dimension, [...problem.constraints, ...extra], { relativeAccuracy: 1e-9, checkpoint });
  const found = oracle.findFeasiblePoint();
  return found.status === 'OPTIMAL' && found.point ? hermitianPart(found.point) : null;
}
