// Entanglement-based six-state protocol: the same error rate in X, Y and Z, key = Alice's Z outcome.
import { PAULI_Y, aliceZKeyBranch, correlationProjector } from './operators.js';
import { errorOperatorX, errorOperatorZ } from './bb84-entangled.js';
import { matrixToJson } from '../problem/json.js';
import type { ExampleDefinition } from './example.js';

/** E_Y = (1 + Y⊗Y)/2: for |Φ+⟩ the Y outcomes are anti-correlated, so an error is an agreement. */
export const errorOperatorY = () => correlationProjector(PAULI_Y, 1);

export const sixState: ExampleDefinition = {
  name: 'six-state',
  description: 'Two qubits; Tr(ρE_Z) = Tr(ρE_X) = Tr(ρE_Y) = qber; one branch, key = Alice’s Z outcome',
  parameters: [
    { name: 'qber', description: 'error rate in each of the X, Y and Z bases', defaultValue: 0.05, minimum: 0, maximum: 1 },
  ],
  build(parameters) {
    const qber = parameters['qber'];
    return {
      dimensionA: 2,
      dimensionB: 2,
      constraints: [
        { label: 'qber-z', operator: matrixToJson(errorOperatorZ()), lower: qber, upper: qber },
        { label: 'qber-x', operator: matrixToJson(errorOperatorX()), lower: qber, upper: qber },
        { label: 'qber-y', operator: matrixToJson(errorOperatorY()), lower: qber, upper: qber },
      ],
      branches: [aliceZKeyBranch()],
      description: `six-state: error rate ${qber} in X, Y and Z; key = Alice's Z outcome`,
    };
  },
};
