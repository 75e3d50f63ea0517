// Small qubit operators and JSON shorthands shared by the example builders.
import { ComplexMatrix, add, kron, scale } from '../linear-algebra/complex-matrix.js';
import { matrixToJson, type MatrixJson } from '../problem/json.js';
import { ValidationError } from '../problem/errors.js';

export const IDENTITY_2 = ComplexMatrix.identity(2);
export const PAULI_X = ComplexMatrix.from([
  [0, 1],
  [1, 0],
]);
export const PAULI_Y = ComplexMatrix.from([
  [0, [0, -1]],
  [[0, 1], 0],
]);
export const PAULI_Z = ComplexMatrix.from([
  [1, 0],
  [0, -1],
]);

/** |v⟩⟨v| for a column vector given by its entries. */
export function projectorOnto(vector: ArrayLike<number>): ComplexMatrix {
  const n = vector.length;
  const m = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) m.re[i * n + j] = vector[i] * vector[j];
  return m;
}

/** (1 + sign·P⊗P)/2 on two qubits: the probability that the outcomes of P on both sides disagree (sign −1) or agree (sign +1) — see the builders. */
export function correlationProjector(pauli: ComplexMatrix, sign: 1 | -1): ComplexMatrix {
  return scale(add(ComplexMatrix.identity(4), scale(kron(pauli, pauli), sign)), 0.5);
}

/** The single branch "Alice's Z outcome is the key" on two qubits: Kraus operator 1, key map {|0⟩⟨0|⊗1, |1⟩⟨1|⊗1}. */
export function aliceZKeyBranch(): { label: string; krausOperators: MatrixJson[]; keyProjectors: MatrixJson[] } {
  return {
    label: 'key',
    krausOperators: [matrixToJson(ComplexMatrix.identity(4))],
    keyProjectors: [
      matrixToJson(kron(projectorOnto([1, 0]), IDENTITY_2)),
      matrixToJson(kron(projectorOnto([0, 1]), IDENTITY_2)),
    ],
  };
}

/** Throws unless the parameter lies in [low, high]. */
export function requireInRange(name: string, value: number, low: number, high: number): void {
  if (!Number.isFinite(value)) throw new ValidationError(name, `must be a finite number (got ${value})`);
  if (value < low || value > high) throw new ValidationError(name, `must lie in [${low}, ${high}] (got ${value})`);
}
