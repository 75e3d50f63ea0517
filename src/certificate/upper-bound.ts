// The upper bound a result states: F at its final state, computed the same way by the solver and the verifier.
import { createObjective } from '../objectives/index.js';
import { compressToFace, type FeasibleFace } from '../problem/feasible-face.js';
import { matrixFromJson, type MatrixJson } from '../problem/json.js';
import type { EntropyRequest, Problem } from '../problem/model.js';

/** The error of F (bits) the upper bound's inner maximisation may leave before a stagnation ends it. */
const UPPER_BOUND_INNER_ERROR = 1e-10;

/**
 * F at the stored final state (read back from its JSON, compressed to the feasible face), or null when it is not
 * finite there. A fresh objective is used (sandwiched-up warm-starts its inner maximisation from the previous
 * call), so the solver and a verifier on the same platform get the same number bit for bit.
 */
export function upperBoundAt(
  face: FeasibleFace,
  restricted: Problem,
  request: EntropyRequest,
  finalState: MatrixJson,
): number | null {
  const state = compressToFace(face, matrixFromJson(finalState, 'finalState'));
  let value: number;
  try {
    const objective = createObjective(restricted, request);
    // Sandwiched-up: any τ gives an upper bound, but one the inner loop left early (three iterations without halving,
    // far above its floor) overstates the gap; the stated F asks for the loop's own tolerance (docs/convergence.md).
    objective.allowInnerError(UPPER_BOUND_INNER_ERROR);
    value = objective.evaluate(state, { withGradient: false }).value;
  } catch (error) {
    if (error instanceof RangeError) return null;
    throw error;
  }
  return Number.isFinite(value) ? value : null;
}
