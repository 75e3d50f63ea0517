// Entanglement-based qubit BB84: error rates in Z and X fixed, key = Alice's Z outcome, no sifting factor.
import { PAULI_X, PAULI_Z, aliceZKeyBranch, correlationProjector } from './operators.js';
import { matrixToJson, type ProblemJson } from '../problem/json.js';
import type { ExampleDefinition } from './example.js';
import { TEST_PROBABILITY_PARAMETER, binaryEntropy, testRoundForm } from './test-rounds.js';

/** E_Z = (1 − Z⊗Z)/2: the probability that Alice's and Bob's Z outcomes differ. */
export const errorOperatorZ = () => correlationProjector(PAULI_Z, -1);
/** E_X = (1 − X⊗X)/2: the probability that Alice's and Bob's X outcomes differ. */
export const errorOperatorX = () => correlationProjector(PAULI_X, -1);

export const bb84Entangled: ExampleDefinition = {
  name: 'bb84-entangled',
  description: 'Two qubits; Tr(ρE_Z) = qber-z, Tr(ρE_X) = qber-x; one branch, key = Alice’s Z outcome',
  parameters: [
    { name: 'qber-z', description: 'error rate in the Z basis', defaultValue: 0.05, minimum: 0, maximum: 1 },
    { name: 'qber-x', description: 'error rate in the X basis', defaultValue: 0.05, minimum: 0, maximum: 1 },
    TEST_PROBABILITY_PARAMETER,
  ],
  build(parameters) {
    const qberZ = parameters['qber-z'];
    const qberX = parameters['qber-x'];
    const gamma = parameters['test-probability'] ?? 0;
    const plain: ProblemJson = {
      dimensionA: 2,
      dimensionB: 2,
      constraints: [
        { label: 'qber-z', operator: matrixToJson(errorOperatorZ()), lower: qberZ, upper: qberZ },
        { label: 'qber-x', operator: matrixToJson(errorOperatorX()), lower: qberX, upper: qberX },
      ],
      branches: [aliceZKeyBranch()],
      description: `bb84-entangled: error rates ${qberZ} (Z) and ${qberX} (X); key = Alice's Z outcome`,
    };
    if (gamma === 0) return plain;
    // Key rounds: both measure Z (Bob's error rate qber-z sets the error correction); test rounds: both measure X
    // and announce whether the outcomes agree (the phase-error test that bounds Eve's knowledge of Z).
    return testRoundForm(
      plain,
      gamma,
      [{ branch: aliceZKeyBranch(), honestProbability: 1, errorCorrectionEntropy: binaryEntropy(qberZ) }],
      [
        { label: 'test-x-agree', krausOperators: [correlationProjector(PAULI_X, 1)], honestProbability: 1 - qberX },
        { label: 'test-x-error', krausOperators: [errorOperatorX()], honestProbability: qberX },
      ],
    );
  },
};
