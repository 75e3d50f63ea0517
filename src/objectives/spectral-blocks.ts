import {
  ComplexMatrix,
  diagonalBlock,
  directSum,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
} from '../linear-algebra/complex-matrix.js';
import { eigh, type HermitianEigen } from '../linear-algebra/eigen.js';
import {
  dividedDifferences,
  frechetDerivative,
  spectralFunction,
  type ScalarFunction,
} from '../linear-algebra/matrix-functions.js';

export { powerFunction } from '../linear-algebra/matrix-functions.js';

/**
 * Conditioning ledger: the largest ‖A‖_F/λ_min(A) over the positive matrices whose spectral functions an
 * evaluation takes. A backward error of size u·‖A‖ moves a log or a negative power by about u·‖A‖/λ_min, so the
 * certificate margin scales with this number (src/certificate/bound.ts). Evaluations run one at a time per thread.
 */
let ledger = 1;

export function resetConditioning(): void {
  ledger = 1;
}

export function readConditioning(): number {
  return ledger;
}

/** eigh of a positive semidefinite matrix, recording its conditioning in the ledger. */
export function positiveEigen(a: ComplexMatrix): HermitianEigen {
  const e = eigh(a);
  const n = e.values.length;
  if (n > 0) {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += e.values[i] * e.values[i];
    const ratio = Math.sqrt(norm) / Math.max(e.values[0], Number.MIN_VALUE);
    if (ratio > ledger) ledger = ratio;
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

/** ⊕_k f(Y_k) from the blocks' eigendecompositions. */
export function blockSpectralFunction(eigs: readonly HermitianEigen[], f: (x: number) => number): ComplexMatrix {
  return directSum(eigs.map((e) => spectralFunction(e, f)));
}

/** ⊕_k Df(Y_k)[H_kk]: the Fréchet derivative of a block-diagonal function, applied to the pinched direction. */
export function blockFrechet(
  eigs: readonly HermitianEigen[],
  f: ScalarFunction,
  direction: ComplexMatrix,
  sizes: readonly number[],
  offsets: readonly number[],
): ComplexMatrix {
  return directSum(
    eigs.map((e, k) =>
      frechetDerivative(e, dividedDifferences(e.values, f.value, f.derivative, f.difference), diagonalBlock(direction, offsets[k], sizes[k])),
    ),
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
  if (outputRange === null) {
    const m = multiply(multiply(ys, x), ys);
    const me = positiveEigen(m);
    const quasiEntropy = traceFunction(me.values, (t) => (t > 0 ? t ** gamma : 0));
    const weight = spectralFunction(me, (t) => gamma * t ** (gamma - 1));
    const powerOfM = spectralFunction(me, (t) => (t > 0 ? t ** gamma : 0));
    return { quasiEntropy, weight, powerOfM };
  }
  const xe = positiveEigen(compress(outputRange, x));
  const factor = multiply(multiply(ys, outputRange), spectralFunction(xe, (t) => Math.sqrt(Math.max(t, 0))));
  const ne = positiveEigen(multiplyAdjointLeft(factor, factor));
  const quasiEntropy = traceFunction(ne.values, (t) => (t > 0 ? t ** gamma : 0));
  const weight = expand(factor, spectralFunction(ne, (t) => gamma * t ** (gamma - 2)));
  const powerOfM = expand(factor, spectralFunction(ne, (t) => t ** (gamma - 1)));
  return { quasiEntropy, weight, powerOfM };
}

/** Tr X with its gradient, the identity on the support (the value of every quasi-entropy of X relative to itself). */
export function traceTerm(x: ComplexMatrix, withGradient: boolean): { value: number; gradient: ComplexMatrix | null } {
  let value = 0;
  for (let i = 0; i < x.rows; i++) value += x.re[i * x.cols + i];
  return { value, gradient: withGradient ? ComplexMatrix.identity(x.rows) : null };
}
