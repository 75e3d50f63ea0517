// The upper bound a result states: F at its final state, computed the same way by the solver and the verifier.
import { createObjective } from '../objectives/index.js';
import { compressToFace, type FeasibleFace } from '../problem/feasible-face.js';
import { matrixFromJson, type MatrixJson } from '../problem/json.js';
import type { EntropyRequest, Problem } from '../problem/model.js';

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
    value = createObjective(restricted, request).evaluate(state, { withGradient: false }).value;
  } catch (error) {
    if (error instanceof RangeError) return null;
    throw error;
  }
  return Number.isFinite(value) ? value : null;
}
