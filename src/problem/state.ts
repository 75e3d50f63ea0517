// Density operators given as JSON (the CLI's --state, warm starts).
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { matrixFromJson } from './json.js';
import { requireDensityOperator } from './operator-checks.js';

/**
 * A renyibound.v1.Matrix JSON that must be a density operator on a space of `dimension`: square of that size,
 * Hermitian, positive semidefinite and of trace 1 within the validation tolerances. Returns the exact Hermitian part.
 */
export function densityOperatorFromJson(json: unknown, field: string, dimension: number): ComplexMatrix {
  return requireDensityOperator(matrixFromJson(json, field), dimension, field);
}
