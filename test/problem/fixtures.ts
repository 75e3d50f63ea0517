// A small valid problem written out by hand: two qubits, a Z error-rate constraint, a maximally mixed
// source marginal, a Z⊗Z table with tolerance 0.01, one branch with key = Alice's Z outcome.
export const real = (rows: number, cols: number, re: number[]) => ({ rows, cols, re });
export const I4 = real(4, 4, [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]);
export const ERROR_Z = real(4, 4, [0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0]);
export const P0 = real(2, 2, [1, 0, 0, 0]);
export const P1 = real(2, 2, [0, 0, 0, 1]);
export const KEY0 = real(4, 4, [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0]);
export const KEY1 = real(4, 4, [0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]);

// Test inputs are mutated freely, including into invalid shapes, so they are untyped.
export type Json = any;

export function baseProblem(): Json {
  return structuredClone({
    dimensionA: 2,
    dimensionB: 2,
    sourceMarginal: real(2, 2, [0.5, 0, 0, 0.5]),
    constraints: [{ label: 'qber-z', operator: ERROR_Z, lower: 0.1, upper: 0.1 }],
    observations: [
      { label: 'zz', povmA: [P0, P1], povmB: [P0, P1], probabilities: [0.45, 0.05, 0.05, 0.45], tolerance: 0.01 },
    ],
    branches: [{ label: 'key', krausOperators: [I4], keyProjectors: [KEY0, KEY1], score: 0 }],
  });
}

