import {
  ComplexMatrix,
  diagonalBlock,
  directSum,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  scale,
} from '../linear-algebra/complex-matrix.js';
import { eigh, type HermitianEigen } from '../linear-algebra/eigen.js';
import {
  dividedDifferences,
  frechetDerivative,
  spectralFunction,
  spectralFunctionInto,
  type ScalarFunction,
} from '../linear-algebra/matrix-functions.js';

export { powerFunction } from '../linear-algebra/matrix-functions.js';

/**
 * Conditioning ledger: the largest ‖A‖_F/λ_min(A) over the positive matrices whose spectral functions an
 * evaluation takes. A backward error of size u·‖A‖ moves a log or a negative power by about u·‖A‖/λ_min, so the
 * certificate margin scales with this number (src/certificate/bound.ts). The branch outputs X_c are kept apart
 * (`output`): where their errors reach the bound is measured by the curvature of F instead (docs/convergence.md).
 * Evaluations run one at a time per thread.
 */
let derivedLedger = 1;
let outputLedger = 1;
/** The smallest eigenvalue of a branch output met (the finite-difference step of the curvature scales with it). */
let outputFloor = Infinity;

export function resetConditioning(): void {
  derivedLedger = 1;
  outputLedger = 1;
  outputFloor = Infinity;
}

/** Every matrix met, branch outputs included. */
export function readConditioning(): number {
  return Math.max(derivedLedger, outputLedger);
}

/** Every matrix met except the branch outputs X_c (the pinched blocks, τ, square-root factors). */
export function readDerivedConditioning(): number {
  return derivedLedger;
}

export function readOutputFloor(): number {
  return outputFloor;
}

/** eigh of a positive semidefinite matrix, recording its conditioning in the ledger (`output`: a branch output X_c). */
export function positiveEigen(a: ComplexMatrix, role: 'output' | 'derived' = 'derived'): HermitianEigen {
  const e = eigh(a);
  const n = e.values.length;
  if (n > 0) {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += e.values[i] * e.values[i];
    const ratio = Math.sqrt(norm) / Math.max(e.values[0], Number.MIN_VALUE);
    if (role === 'output') {
      outputLedger = Math.max(outputLedger, ratio);
      outputFloor = Math.min(outputFloor, e.values[0]);
    } else derivedLedger = Math.max(derivedLedger, ratio);
  }
  return e;
}

/** x·ln x, whose derivative ln x + 1 is the gradient of Tr X ln X. */
export const entropyFunction: ScalarFunction = {
  value: (x) => (x > 0 ? x * Math.log(x) : 0),
  derivative: (x) => Math.log(x) + 1,
};

/** The key-map pinching in support coordinates: the diagonal blocks of a matrix. */
export function pinchedBlocks(x: ComplexMatrix, sizes: readonly number[], offsets: readonly number[]): ComplexMatrix[] {
  return sizes.map((size, k) => diagonalBlock(x, offsets[k], size));
}

export function eigenBlocks(blocks: readonly ComplexMatrix[]): HermitianEigen[] {
  return blocks.map((b) => positiveEigen(b));
}

/** ⊕_k f(Y_k) from the blocks' eigendecompositions, each block written in place. */
export function blockSpectralFunction(eigs: readonly HermitianEigen[], f: (x: number) => number): ComplexMatrix {
  const n = eigs.reduce((total, e) => total + e.vectors.rows, 0);
  const out = new ComplexMatrix(n, n);
  let offset = 0;
  for (const e of eigs) {
    spectralFunctionInto(out, offset, e, f);
    offset += e.vectors.rows;
  }
  return out;
}

/** ⊕_k Df(Y_k)[H_kk]: the Fréchet derivative of a block-diagonal function, applied to the pinched direction. */
export function blockFrechet(
  eigs: readonly HermitianEigen[],
  f: ScalarFunction,
  direction: ComplexMatrix,
  sizes: readonly number[],
  offsets: readonly number[],
): ComplexMatrix {
  return directSum(blockFrechetParts(eigs, f, direction, sizes, offsets));
}

/** The blocks Df(Y_k)[H_kk] of blockFrechet one by one (what its pinching would copy back out). */
export function blockFrechetParts(
  eigs: readonly HermitianEigen[],
  f: ScalarFunction,
  direction: ComplexMatrix,
  sizes: readonly number[],
  offsets: readonly number[],
): ComplexMatrix[] {
  return eigs.map((e, k) =>
    frechetDerivative(e, dividedDifferences(e.values, f.value, f.derivative, f.difference), diagonalBlock(direction, offsets[k], sizes[k])),
  );
}

export function frechet(eig: HermitianEigen, f: ScalarFunction, direction: ComplexMatrix): ComplexMatrix {
  return frechetDerivative(eig, dividedDifferences(eig.values, f.value, f.derivative, f.difference), direction);
}

/** V†·X·V. */
export function compress(v: ComplexMatrix, x: ComplexMatrix): ComplexMatrix {
  return multiplyAdjointLeft(v, multiply(x, v));
}

/** V·X·V†. */
export function expand(v: ComplexMatrix, x: ComplexMatrix): ComplexMatrix {
  return multiplyAdjointRight(multiply(v, x), v);
}

/** Σ_i f(λ_i) over a spectrum. */
export function traceFunction(values: Float64Array, f: (x: number) => number): number {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += f(values[i]);
  return s;
}

/**
 * A square-root factor of a branch output, X = R·R† with R = left·right: left = V, right = Λ^{1/2} from X = V·Λ·V†,
 * or, when X is rank deficient on its support (outputRange W given), left = W, right = (W†XW)^{1/2}. The
 * eigendecomposition is recorded in the ledger as a branch output. One factor serves every τ of the sandwiched inner
 * maximisation at that X; Y^s·R is formed as (Y^s·left)·right.
 */
export interface OutputRoot {
  left: ComplexMatrix;
  right: ComplexMatrix;
  /** X is rank deficient on the support (R has fewer columns than rows). */
  onRange: boolean;
}

export function outputRoot(x: ComplexMatrix, outputRange: ComplexMatrix | null): OutputRoot {
  if (outputRange === null) {
    const xe = positiveEigen(x, 'output');
    return { left: xe.vectors, right: diagonalRoot(xe.values), onRange: false };
  }
  const xe = positiveEigen(compress(outputRange, x), 'output');
  return { left: outputRange, right: spectralFunction(xe, (t) => Math.sqrt(Math.max(t, 0))), onRange: true };
}

/**
 * For M = Y^s·X·Y^s with Y full rank on the support: returns Tr M^γ and W = γ·M^{γ−1} on supp(M).
 * When X is rank deficient on the support (outputRange given), M = A·A† with A = Y^s·V·X̃^{1/2} and the
 * nonzero spectrum comes from N = A†·A (square-root factor), so no eigenvalue is ever clipped.
 */
export function sandwichedPower(
  ys: ComplexMatrix,
  x: ComplexMatrix,
  outputRange: ComplexMatrix | null,
  gamma: number,
): { quasiEntropy: number; weight: ComplexMatrix; powerOfM: ComplexMatrix } {
  return sandwichedPowerOfRoot(ys, outputRoot(x, outputRange), gamma);
}

/**
 * sandwichedPower from X's square-root factor R (X = R·R†). With `gammaMinusOne` (γ − 1 formed without rounding γ
 * first) it also returns `weightDefect` = W/γ − 1 = M^{γ−1} − 1, through expm1((γ−1)·ln μ) on M's eigenvalues where M
 * is positive definite, so the identity never meets the rounding of W (docs/math.md §5, "The identity part").
 */
export function sandwichedPowerOfRoot(
  ys: ComplexMatrix,
  { left, right, onRange }: OutputRoot,
  gamma: number,
  gammaMinusOne?: number,
): { quasiEntropy: number; weight: ComplexMatrix; powerOfM: ComplexMatrix; weightDefect?: ComplexMatrix; singular: boolean } {
  const factor = multiply(multiply(ys, left), right);
  if (!onRange) {
    // M = G·G† with G = Y^s·V·Λ^{1/2} (X = V·Λ·V†): the spectrum of M comes from G's singular values, which one-sided
    // Jacobi gets to high relative accuracy, instead of from the formed product, whose small eigenvalues carry an
    // absolute error u·‖M‖ (so M's conditioning, about κ(X)·κ(Y)^{2s}, never enters the margin; docs/convergence.md).
    const { left: vectors, singularValues } = oneSidedJacobi(factor);
    // A plain loop: Float64Array.from with a mapping function goes through the iterator protocol (measured slower).
    const squares = new Float64Array(singularValues.length);
    for (let j = 0; j < squares.length; j++) squares[j] = singularValues[j] * singularValues[j];
    const quasiEntropy = traceFunction(squares, (t) => (t > 0 ? t ** gamma : 0));
    const me = { values: squares, vectors };
    // On ker M (a state without full rank) the weight is taken on M's support, as von Neumann's gradient takes ln X on
    // X's; the certificate re-evaluates at a full-rank linearization point. Full-rank inputs are unchanged.
    const weight = spectralFunction(me, (t) => (t > 0 ? gamma * t ** (gamma - 1) : 0));
    const powerOfM = spectralFunction(me, (t) => (t > 0 ? t ** gamma : 0));
    const singular = squares.some((t) => !(t > 0));
    if (gammaMinusOne === undefined) return { quasiEntropy, weight, powerOfM, singular };
    const weightDefect = spectralFunction(me, (t) => (t > 0 ? Math.expm1(gammaMinusOne * Math.log(t)) : -1));
    return { quasiEntropy, weight, powerOfM, weightDefect, singular };
  }
  const ne = positiveEigen(multiplyAdjointLeft(factor, factor));
  const quasiEntropy = traceFunction(ne.values, (t) => (t > 0 ? t ** gamma : 0));
  // A·v = 0 on ker N (‖A·v‖² = v†N·v), so those terms vanish exactly; 0 there avoids 0·∞.
  const weight = expand(factor, spectralFunction(ne, (t) => (t > 0 ? gamma * t ** (gamma - 2) : 0)));
  const powerOfM = expand(factor, spectralFunction(ne, (t) => (t > 0 ? t ** (gamma - 1) : 0)));
  const singular = ne.values.some((t) => !(t > 0));
  if (gammaMinusOne === undefined) return { quasiEntropy, weight, powerOfM, singular };
  // M is singular here: W/γ is far from 1 (zero on ker M), so subtracting 1 cancels nothing.
  const weightDefect = scale(weight, 1 / gamma);
  for (let i = 0; i < weightDefect.rows; i++) weightDefect.re[i * weightDefect.cols + i] -= 1;
  return { quasiEntropy, weight, powerOfM, weightDefect, singular };
}

function diagonalRoot(values: Float64Array): ComplexMatrix {
  return ComplexMatrix.diagonal(Array.from(values, (t) => Math.sqrt(Math.max(t, 0))));
}

/** Sweeps allowed to one-sided Jacobi; a handful suffice at the dimensions of the branch outputs (quadratic convergence). */
const JACOBI_SWEEPS = 60;

/**
 * Singular values and left singular vectors of a square G by one-sided (Hestenes) Jacobi: plane rotations on the
 * right until the columns are orthogonal; σ_j = ‖g_j‖, u_j = g_j/σ_j. For G = B·D with D diagonal the singular
 * values come out with relative error O(u·κ(B)) however graded D is (Demmel & Veselić, SIAM J. Matrix Anal. Appl.
 * 13, 1204, 1992). No library we use has a complex Jacobi SVD (ml-matrix's SVD is real and only absolutely accurate).
 */
export function oneSidedJacobi(g: ComplexMatrix): { left: ComplexMatrix; singularValues: Float64Array } {
  const n = g.rows;
  const k = g.cols;
  const re = g.re.slice();
  const im = g.im.slice();
  const at = (i: number, j: number) => i * k + j;
  for (let sweep = 0; sweep < JACOBI_SWEEPS; sweep++) {
    let rotated = false;
    for (let p = 0; p < k - 1; p++) {
      for (let q = p + 1; q < k; q++) {
        let a = 0;
        let b = 0;
        let cre = 0;
        let cim = 0;
        for (let i = 0; i < n; i++) {
          const pr = re[at(i, p)], pi = im[at(i, p)], qr = re[at(i, q)], qi = im[at(i, q)];
          a += pr * pr + pi * pi;
          b += qr * qr + qi * qi;
          // g_p†·g_q
          cre += pr * qr + pi * qi;
          cim += pr * qi - pi * qr;
        }
        const c = Math.hypot(cre, cim);
        if (c === 0 || c <= Number.EPSILON * Math.sqrt(a * b)) continue;
        rotated = true;
        // Phase e^{−iφ} on g_q makes g_p†g_q = |c| real; then a real rotation orthogonalises the pair.
        const er = cre / c;
        const ei = -cim / c;
        const zeta = (b - a) / (2 * c);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const cs = 1 / Math.sqrt(1 + t * t);
        const sn = cs * t;
        for (let i = 0; i < n; i++) {
          const pr = re[at(i, p)], pi = im[at(i, p)];
          const qr0 = re[at(i, q)], qi0 = im[at(i, q)];
          const hr = qr0 * er - qi0 * ei;
          const hi = qr0 * ei + qi0 * er;
          re[at(i, p)] = cs * pr - sn * hr;
          im[at(i, p)] = cs * pi - sn * hi;
          re[at(i, q)] = sn * pr + cs * hr;
          im[at(i, q)] = sn * pi + cs * hi;
        }
      }
    }
    if (!rotated) break;
  }
  const singularValues = new Float64Array(k);
  const left = ComplexMatrix.zeros(n, k);
  for (let j = 0; j < k; j++) {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += re[at(i, j)] ** 2 + im[at(i, j)] ** 2;
    singularValues[j] = Math.sqrt(norm);
    if (singularValues[j] === 0) continue;
    for (let i = 0; i < n; i++) {
      left.re[i * k + j] = re[at(i, j)] / singularValues[j];
      left.im[i * k + j] = im[at(i, j)] / singularValues[j];
    }
  }
  return { left, singularValues };
}

/** Tr X with its gradient, the identity on the support (the value of every quasi-entropy of X relative to itself). */
export function traceTerm(x: ComplexMatrix, withGradient: boolean): { value: number; gradient: ComplexMatrix | null } {
  let value = 0;
  for (let i = 0; i < x.rows; i++) value += x.re[i * x.cols + i];
  return { value, gradient: withGradient ? ComplexMatrix.identity(x.rows) : null };
}
