// Entanglement-based six-state protocol: the same error rate in X, Y and Z, key = Alice's Z outcome.
import { scale } from '../linear-algebra/complex-matrix.js';
import { PAULI_X, PAULI_Y, PAULI_Z, aliceZKeyBranch, correlationProjector } from './operators.js';
import { errorOperatorX, errorOperatorZ } from './bb84-entangled.js';
import { matrixToJson, type ProblemJson } from '../problem/json.js';
import type { ExampleDefinition } from './example.js';
import { TEST_PROBABILITY_PARAMETER, binaryEntropy, testRoundForm, type TestOutcome } from './test-rounds.js';

/** E_Y = (1 + Y⊗Y)/2: for |Φ+⟩ the Y outcomes are anti-correlated, so an error is an agreement. */
export const errorOperatorY = () => correlationProjector(PAULI_Y, 1);

export const sixState: ExampleDefinition = {
  name: 'six-state',
  description: 'Two qubits; Tr(ρE_Z) = Tr(ρE_X) = Tr(ρE_Y) = qber; one branch, key = Alice’s Z outcome',
  parameters: [
    { name: 'qber', description: 'error rate in each of the X, Y and Z bases', defaultValue: 0.05, minimum: 0, maximum: 1 },
    TEST_PROBABILITY_PARAMETER,
  ],
  build(parameters) {
    const qber = parameters['qber'];
    const gamma = parameters['test-probability'] ?? 0;
    const plain: ProblemJson = {
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
    if (gamma === 0) return plain;
    // Test rounds pick X, Y or Z with probability 1/3 each and announce whether the outcomes agree (for Y an
    // agreement of |Φ+⟩ is an error): Kraus operator P/√3 for each agreement/error projector P.
    const bases: [string, ReturnType<typeof correlationProjector>, ReturnType<typeof correlationProjector>][] = [
      ['x', correlationProjector(PAULI_X, 1), errorOperatorX()],
      ['y', correlationProjector(PAULI_Y, -1), errorOperatorY()],
      ['z', correlationProjector(PAULI_Z, 1), errorOperatorZ()],
    ];
    const tests: TestOutcome[] = bases.flatMap(([basis, agree, error]) => [
      { label: `test-${basis}-agree`, krausOperators: [scale(agree, 1 / Math.sqrt(3))], honestProbability: (1 - qber) / 3 },
      { label: `test-${basis}-error`, krausOperators: [scale(error, 1 / Math.sqrt(3))], honestProbability: qber / 3 },
    ]);
    return testRoundForm(
      plain,
      gamma,
      [{ branch: aliceZKeyBranch(), honestProbability: 1, errorCorrectionEntropy: binaryEntropy(qber) }],
      tests,
    );
  },
};
