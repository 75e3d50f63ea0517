import { add, ComplexMatrix, traceProductReal } from '../linear-algebra/complex-matrix.js';
import { spectralFunction } from '../linear-algebra/matrix-functions.js';
import { isKeyless, type BranchSupport } from './branch-supports.js';
import {
  blockFrechet,
  blockSpectralFunction,
  compress,
  eigenBlocks,
  expand,
  frechet,
  pinchedBlocks,
  positiveEigen,
  powerFunction,
  traceTerm,
} from './spectral-blocks.js';

/**
 * Q̄_β(X‖Z(X)) = Tr[X^β Z(X)^{1−β}] with β = 2 − α, and its gradient
 * D(·)^β(X)[Y^{1−β}] + Z(D(·)^{1−β}(Y)[X^β]), Y = Z(X). X^β is taken on range(X) where X is full rank.
 */
export function petzDownQuasiEntropy(
  x: ComplexMatrix,
  support: BranchSupport,
  alpha: number,
  withGradient: boolean,
): { value: number; gradient: ComplexMatrix | null } {
  // No key in this branch: Q̄(X‖X) = Tr X exactly, gradient 1.
  if (isKeyless(support)) return traceTerm(x, withGradient);
  const beta = 2 - alpha;
  const { blockSizes: sizes, blockOffsets: offsets, outputRange: range } = support;
  const blockEigs = eigenBlocks(pinchedBlocks(x, sizes, offsets));
  const pinchedPower = blockSpectralFunction(blockEigs, (t) => Math.max(t, 0) ** (1 - beta));
  const xe = positiveEigen(range === null ? x : compress(range, x), 'output');
  const statePowerReduced = spectralFunction(xe, (t) => Math.max(t, 0) ** beta);
  const pinchedPowerReduced = range === null ? pinchedPower : compress(range, pinchedPower);
  const value = traceProductReal(statePowerReduced, pinchedPowerReduced);
  if (!withGradient) return { value, gradient: null };
  const gradientReduced = frechet(xe, powerFunction(beta), pinchedPowerReduced);
  const gradientX = range === null ? gradientReduced : expand(range, gradientReduced);
  const statePower = range === null ? statePowerReduced : expand(range, statePowerReduced);
  const gradientY = blockFrechet(blockEigs, powerFunction(1 - beta), statePower, sizes, offsets);
  return { value, gradient: add(gradientX, gradientY) };
}
