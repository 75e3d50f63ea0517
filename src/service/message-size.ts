// The largest gRPC message server and clients accept, derived from the largest problem validation allows.
import { DEFAULT_MAX_DIMENSION } from '../problem/tolerances.js';

/** Bytes of one dense complex d×d matrix on the wire: two packed repeated doubles (plus a few tag bytes). */
export function denseMatrixBytes(dimension: number): number {
  return 2 * dimension * dimension * 8 + 32;
}

/**
 * Dense complex matrices of the maximal dimension a message may carry by default. Validation bounds the
 * dimension, not the number of operators; 64 covers a problem with dozens of dense constraints, Kraus operators and
 * key projectors at d = 256 (d = 256 with 5 complex constraints is about 6.5 MiB), and any result (final state,
 * linearization point, one reference state per branch).
 */
export const DEFAULT_MESSAGE_MATRICES = 64;

/** Default limit in bytes: 64 dense complex 256×256 matrices, about 64 MiB. */
export const DEFAULT_MAX_MESSAGE_BYTES = DEFAULT_MESSAGE_MATRICES * denseMatrixBytes(DEFAULT_MAX_DIMENSION);

/**
 * The transport refuses messages beyond this multiple of the limit outright (RESOURCE_EXHAUSTED, nothing
 * decoded): between the limit and this cap the message is read and refused as INVALID_ARGUMENT naming the limit.
 */
export const TRANSPORT_CAP_FACTOR = 4;

export function mebibytes(bytes: number): string {
  return `${(bytes / 2 ** 20).toFixed(1)} MiB`;
}
