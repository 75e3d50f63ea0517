import {
  ComplexMatrix,
  concatColumns,
  multiply,
  multiplyAdjointLeft,
  multiplyAdjointRight,
  addScaledInPlace,
} from '../linear-algebra/complex-matrix.js';
import { rangeIsometry } from '../linear-algebra/support.js';
import type { AnnouncementBranch } from '../problem/model.js';

/**
 * One announcement branch expressed on the support of its pinched output (facial reduction of the output).
 *
 * At a full-rank ρ, X_c(ρ) has the range of X_c(1) and Z(X_c) the range of Z(X_c(1)); both are fixed by the
 * problem, so matrix functions with negative powers or logs are evaluated there and never on a clipped spectrum.
 * Coordinates: the columns of U = [W_1 | … | W_K], W_k an orthonormal basis of range(Z_k X_c(1) Z_k); in them the
 * key-map pinching keeps the diagonal blocks of sizes `blockSizes`.
 */
export interface BranchSupport {
  label: string;
  score: number;
  /** U: orthonormal basis of the pinched-output support inside H_c (columns, block by block). */
  basis: ComplexMatrix;
  /** U†·K_{c,j}: maps H (the ρ space) to the pinched-output support. */
  krausOperators: ComplexMatrix[];
  /** Sizes of the key blocks (blocks with empty support are dropped). */
  blockSizes: number[];
  blockOffsets: number[];
  /** Dimension r_Z of the pinched-output support. */
  dimension: number;
  /** Isometry onto range(X_c(1)) inside the support coordinates, or null when X_c(1) has full rank r_Z there. */
  outputRange: ComplexMatrix | null;
}

/** A branch whose key map has a single block: no key is produced there (every kind has an exact term for it). */
export function isKeyless(support: BranchSupport): boolean {
  return support.blockSizes.length === 1;
}

/** Σ_j K_j·K_j†: the output of the identity operator, whose range is the support at every full-rank input. */
export function outputOfIdentity(kraus: readonly ComplexMatrix[]): ComplexMatrix {
  const out = ComplexMatrix.zeros(kraus[0].rows);
  for (const k of kraus) addScaledInPlace(out, multiplyAdjointRight(k, k), 1);
  return out;
}

export function branchSupport(branch: AnnouncementBranch): BranchSupport {
  const identityOutput = outputOfIdentity(branch.krausOperators);
  const blockBases: ComplexMatrix[] = [];
  for (const projector of branch.keyProjectors) {
    const pinched = multiply(multiply(projector, identityOutput), projector);
    const basis = rangeIsometry(pinched);
    if (basis.cols > 0) blockBases.push(basis);
  }
  const outputDimension = identityOutput.rows;
  const blockSizes = blockBases.map((b) => b.cols);
  const blockOffsets: number[] = [];
  let offset = 0;
  for (const size of blockSizes) {
    blockOffsets.push(offset);
    offset += size;
  }
  const support = concatColumns(blockBases, outputDimension);
  const krausOperators = branch.krausOperators.map((k) => multiplyAdjointLeft(support, k));
  const reducedIdentityOutput = outputOfIdentity(krausOperators);
  const range = rangeIsometry(reducedIdentityOutput);
  return {
    label: branch.label,
    score: branch.score,
    basis: support,
    krausOperators,
    blockSizes,
    blockOffsets,
    dimension: offset,
    outputRange: range.cols < offset ? range : null,
  };
}
