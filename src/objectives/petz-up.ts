import { add, ComplexMatrix, hermitianSum, multiply } from '../linear-algebra/complex-matrix.js';
import { isKeyless, type BranchSupport } from './branch-supports.js';
import {
  blockFrechet,
  blockSpectralFunction,
  eigenBlocks,
  pinchedBlocks,
  powerFunction,
  sandwichedPower,
  traceTerm,
} from './spectral-blocks.js';

/**
 * Q̃_γ(X‖Z(X)) = Tr[(Y^s X Y^s)^γ] with Y = Z(X), γ = 1/α, s = (1−γ)/(2γ), and its gradient
 * ∇_X q + Z(∇_Y q): ∇_X q = Y^s W Y^s, ∇_Y q = D(·)^s(Y)[X Y^s W + W Y^s X], W = γ M^{γ−1}.
 */
export function petzUpQuasiEntropy(
  x: ComplexMatrix,
  support: BranchSupport,
  alpha: number,
  withGradient: boolean,
): { value: number; gradient: ComplexMatrix | null } {
  // No key in this branch (one key block): Z(X) = X and Q̃_γ(X‖X) = Tr X exactly, with gradient 1; the general
  // formula would square X's conditioning (M = X²) for nothing.
  if (isKeyless(support)) return traceTerm(x, withGradient);
  const gamma = 1 / alpha;
  const s = (1 - gamma) / (2 * gamma);
  const { blockSizes: sizes, blockOffsets: offsets } = support;
  const blockEigs = eigenBlocks(pinchedBlocks(x, sizes, offsets));
  const ys = blockSpectralFunction(blockEigs, (t) => Math.max(t, 0) ** s);
  const { quasiEntropy, weight } = sandwichedPower(ys, x, support.outputRange, gamma);
  if (!withGradient) return { value: quasiEntropy, gradient: null };
  const ysWys = multiply(multiply(ys, weight), ys);
  const xysW = multiply(multiply(x, ys), weight);
  const symmetric = hermitianSum(xysW);
  const gradientY = blockFrechet(blockEigs, powerFunction(s), symmetric, sizes, offsets);
  return { value: quasiEntropy, gradient: add(ysWys, gradientY) };
}

