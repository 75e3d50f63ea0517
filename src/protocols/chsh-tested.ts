// Trusted-measurement CHSH test: the CHSH win probability is fixed, key = Alice's Z outcome.
import { ComplexMatrix, add, addScaledInPlace, kron, scale, subtract } from '../linear-algebra/complex-matrix.js';
import { PAULI_X, PAULI_Z, aliceZKeyBranch } from './operators.js';
import { matrixToJson } from '../problem/json.js';
import type { ExampleDefinition } from './example.js';

/**
 * W = 1/2 + (A0⊗B0 + A0⊗B1 + A1⊗B0 − A1⊗B1)/8 with A0 = Z, A1 = X, B0 = (Z+X)/√2, B1 = (Z−X)/√2:
 * the probability of winning the CHSH game with these observables.
 */
export function chshWinOperator(): ComplexMatrix {
  const a0 = PAULI_Z;
  const a1 = PAULI_X;
  const b0 = scale(add(PAULI_Z, PAULI_X), Math.SQRT1_2);
  const b1 = scale(subtract(PAULI_Z, PAULI_X), Math.SQRT1_2);
  const w = scale(ComplexMatrix.identity(4), 0.5);
  addScaledInPlace(w, kron(a0, b0), 1 / 8);
  addScaledInPlace(w, kron(a0, b1), 1 / 8);
  addScaledInPlace(w, kron(a1, b0), 1 / 8);
  addScaledInPlace(w, kron(a1, b1), -1 / 8);
  return w;
}

export const chshTested: ExampleDefinition = {
  name: 'chsh-tested',
  description: 'Two qubits; Tr(ρW) = win-probability for the CHSH win operator W; one branch, key = Alice’s Z outcome',
  parameters: [
    {
      name: 'win-probability',
      description: 'CHSH win probability (above cos²(π/8) ≈ 0.8536 no state reaches it)',
      defaultValue: 0.85,
      minimum: 0,
      maximum: 1,
    },
  ],
  build(parameters) {
    const win = parameters['win-probability'];
    return {
      dimensionA: 2,
      dimensionB: 2,
      constraints: [{ label: 'chsh-win-probability', operator: matrixToJson(chshWinOperator()), lower: win, upper: win }],
      branches: [aliceZKeyBranch()],
      description: `chsh-tested: CHSH win probability ${win}; key = Alice's Z outcome`,
    };
  },
};
