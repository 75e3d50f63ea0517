import { ComplexMatrix, subtract } from '../linear-algebra/complex-matrix.js';
import { spectralFunction } from '../linear-algebra/matrix-functions.js';
import { isKeyless, type BranchSupport } from './branch-supports.js';
import {
  blockSpectralFunction,
  compress,
  eigenBlocks,
  entropyFunction,
  expand,
  pinchedBlocks,
  positiveEigen,
  traceFunction,
} from './spectral-blocks.js';

/**
 * D(X‖Z(X)) = Tr X ln X − Tr Z(X) ln Z(X) (nats; the pinching makes the cross term a block entropy),
 * with its gradient ln X − ln Z(X) (the +1 terms cancel because range X ⊆ range Z(X)).
 */
export function relativeEntropyToPinched(
  x: ComplexMatrix,
  support: BranchSupport,
  withGradient: boolean,
): { value: number; gradient: ComplexMatrix | null } {
  // No key in this branch: D(X‖X) = 0 exactly, and so is its gradient.
  if (isKeyless(support)) {
    return { value: 0, gradient: withGradient ? ComplexMatrix.zeros(support.dimension) : null };
  }
  const blockEigs = eigenBlocks(pinchedBlocks(x, support.blockSizes, support.blockOffsets));
  let pinchedPart = 0;
  for (const e of blockEigs) pinchedPart += traceFunction(e.values, entropyFunction.value);
  const range = support.outputRange;
  const xe = positiveEigen(range === null ? x : compress(range, x), 'output');
  const statePart = traceFunction(xe.values, entropyFunction.value);
  const value = statePart - pinchedPart;
  if (!withGradient) return { value, gradient: null };
  const logState = spectralFunction(xe, entropyFunction.derivative);
  const gradient = subtract(
    range === null ? logState : expand(range, logState),
    blockSpectralFunction(blockEigs, entropyFunction.derivative),
  );
  return { value, gradient };
}
