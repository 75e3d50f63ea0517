// Single-photon prepare-and-measure BB84 in the source-replacement picture, with a lossy depolarising channel.
//
// Alice's register |i⟩_A (i = 0..3) records which state |φ_i⟩ ∈ {|0⟩, |1⟩, |+⟩, |−⟩} she sent, with
// probabilities p = (p_Z/2, p_Z/2, (1−p_Z)/2, (1−p_Z)/2); the joint state before the channel is
// |ψ⟩ = Σ_i √p_i |i⟩_A|φ_i⟩_B, so ρ_A is the Gram matrix (ρ_A)_ij = √(p_i p_j)⟨φ_j|φ_i⟩ (rank 2).
// Bob's system is a qubit, plus a vacuum level (index 2) when the transmittance η < 1.
import { ComplexMatrix, kron } from '../linear-algebra/complex-matrix.js';
import { matrixToJson, type MatrixJson, type ProblemJson } from '../problem/json.js';
import { projectorOnto } from './operators.js';
import type { ExampleDefinition } from './example.js';
import { TEST_PROBABILITY_PARAMETER, binaryEntropy, testRoundForm, type TestOutcome } from './test-rounds.js';

const HALF = Math.SQRT1_2;

/** Bob's qubit states |0⟩, |1⟩, |+⟩, |−⟩ (real amplitudes), in the order of Alice's register. */
export const SENT_STATES: readonly (readonly [number, number])[] = [
  [1, 0],
  [0, 1],
  [HALF, HALF],
  [HALF, -HALF],
];

/** Probabilities with which Alice sends |0⟩, |1⟩, |+⟩, |−⟩. */
export function sendingProbabilities(zBasisProbability: number): number[] {
  const z = zBasisProbability / 2;
  const x = (1 - zBasisProbability) / 2;
  return [z, z, x, x];
}

/** (ρ_A)_ij = √(p_i p_j)⟨φ_j|φ_i⟩. */
export function sourceMarginal(zBasisProbability: number): ComplexMatrix {
  const p = sendingProbabilities(zBasisProbability);
  const rho = new ComplexMatrix(4, 4);
  for (let i = 0; i < 4; i++) {
    for (let j = 0; j < 4; j++) {
      const overlap = SENT_STATES[j][0] * SENT_STATES[i][0] + SENT_STATES[j][1] * SENT_STATES[i][1];
      rho.re[i * 4 + j] = Math.sqrt(p[i] * p[j]) * overlap;
    }
  }
  return rho;
}

/** Bob's dimension: a qubit, plus a vacuum level when photons can be lost. */
export function bobDimension(transmittance: number): number {
  return transmittance < 1 ? 3 : 2;
}

/** A qubit vector padded with zeros to Bob's dimension. */
function padded(vector: readonly number[], dimensionB: number): number[] {
  return [...vector, ...new Array<number>(dimensionB - vector.length).fill(0)];
}

/**
 * Bob's POVM: p_Z|0⟩⟨0|, p_Z|1⟩⟨1|, (1−p_Z)|+⟩⟨+|, (1−p_Z)|−⟩⟨−| (qubit projectors padded with a zero vacuum
 * row and column), then |vac⟩⟨vac| when lossy; each element is weight·|vector⟩⟨vector|.
 */
function bobOutcomes(
  zBasisProbability: number,
  dimensionB: number,
): { weight: number; vector: number[]; vacuum: boolean }[] {
  const outcomes = SENT_STATES.map((state, y) => ({
    weight: y < 2 ? zBasisProbability : 1 - zBasisProbability,
    vector: padded([...state], dimensionB),
    vacuum: false,
  }));
  if (dimensionB === 3) outcomes.push({ weight: 1, vector: [0, 0, 1], vacuum: true });
  return outcomes;
}

/**
 * The expected joint table p(i, y) = p_i·Tr(Q_y N(|φ_i⟩⟨φ_i|)) for the channel N = loss ∘ depolarising:
 * depolarising D(σ) = (1 − 2q)σ + q·1 gives error rate q in both bases; loss keeps the photon with
 * probability η and sends it to the vacuum level otherwise. Every entry is a sum of nonnegative terms.
 */
export function expectedTable(qber: number, transmittance: number, zBasisProbability: number): number[] {
  const dimensionB = bobDimension(transmittance);
  const p = sendingProbabilities(zBasisProbability);
  const table: number[] = [];
  for (let i = 0; i < 4; i++) {
    for (const { weight, vector, vacuum } of bobOutcomes(zBasisProbability, dimensionB)) {
      if (vacuum) {
        table.push(p[i] * (1 - transmittance));
        continue;
      }
      const overlap = vector[0] * SENT_STATES[i][0] + vector[1] * SENT_STATES[i][1];
      // ⟨χ|D(φφ†)|χ⟩ = (1 − 2q)|⟨χ|φ⟩|² + q for a unit qubit vector χ, written as a sum of nonnegative parts.
      const clickProbability = (1 - qber) * overlap * overlap + qber * (1 - overlap * overlap);
      table.push(p[i] * transmittance * weight * clickProbability);
    }
  }
  return table;
}

/**
 * The key branch: Alice sent a Z state and Bob measured Z and clicked. K = V ⊗ √p_Z·Π_qubit with V = |0⟩⟨0| + |1⟩⟨1|
 * mapped into a two-level key register (a 2×4 matrix), so H_c = C² ⊗ H_B; key map |k⟩⟨k| ⊗ 1_B.
 */
export function keyBranchKrausOperator(zBasisProbability: number, dimensionB: number): ComplexMatrix {
  const register = new ComplexMatrix(2, 4);
  register.re[0 * 4 + 0] = 1;
  register.re[1 * 4 + 1] = 1;
  const clickedInZ = new ComplexMatrix(dimensionB, dimensionB);
  clickedInZ.re[0] = Math.sqrt(zBasisProbability);
  clickedInZ.re[dimensionB + 1] = Math.sqrt(zBasisProbability);
  return kron(register, clickedInZ);
}

/**
 * The branch holding every other outcome: √(1 − K†K). K†K = (|0⟩⟨0| + |1⟩⟨1|)_A ⊗ p_Z·Π_qubit is diagonal,
 * so the square root is taken entry by entry: √(1 − p_Z) where K acts, 1 elsewhere.
 */
export function noKeyBranchKrausOperator(zBasisProbability: number, dimensionB: number): ComplexMatrix {
  const d = 4 * dimensionB;
  const m = new ComplexMatrix(d, d);
  for (let a = 0; a < 4; a++) {
    for (let b = 0; b < dimensionB; b++) {
      const index = a * dimensionB + b;
      const inKeyBranch = a < 2 && b < 2;
      m.re[index * d + index] = inKeyBranch ? Math.sqrt(1 - zBasisProbability) : 1;
    }
  }
  return m;
}

/** Which coarse-grained test outcome Alice's state i and Bob's outcome y (4 = no click) fall in. */
function testOutcomeLabel(i: number, y: number): string {
  if (y === 4) return 'test-no-click';
  const aliceZ = i < 2;
  if (aliceZ !== y < 2) return 'test-basis-mismatch';
  return `test-${aliceZ ? 'z' : 'x'}-${i === y ? 'agree' : 'error'}`;
}

/**
 * Test rounds: Alice announces her state and Bob his outcome, coarse-grained to agreement/error per basis, a
 * basis mismatch, or no click. One Kraus operator |i⟩⟨i| ⊗ √w_y|χ_y⟩⟨χ_y| per pair (i, y) of the outcome.
 */
function testOutcomes(qber: number, transmittance: number, zBasisProbability: number): TestOutcome[] {
  const dimensionB = bobDimension(transmittance);
  const table = expectedTable(qber, transmittance, zBasisProbability);
  const outcomes = bobOutcomes(zBasisProbability, dimensionB);
  const byLabel = new Map<string, TestOutcome>();
  for (let i = 0; i < 4; i++) {
    outcomes.forEach(({ weight, vector }, y) => {
      const label = testOutcomeLabel(i, y);
      const outcome = byLabel.get(label) ?? { label, krausOperators: [], honestProbability: 0 };
      const bob = projectorOnto(vector);
      for (let k = 0; k < bob.re.length; k++) bob.re[k] *= Math.sqrt(weight);
      outcome.krausOperators.push(kron(projectorOnto([0, 1, 2, 3].map((k) => (k === i ? 1 : 0))), bob));
      outcome.honestProbability += table[i * outcomes.length + y];
      byLabel.set(label, outcome);
    });
  }
  return [...byLabel.values()];
}

export const bb84PrepareMeasure: ExampleDefinition = {
  name: 'bb84-prepare-measure',
  description:
    'Source replacement (d_A = 4) with a qubit at Bob plus vacuum when lossy; full joint table from a depolarising ' +
    'channel then loss; key branch (Z sent, Z measured, click) and a no-key branch',
  parameters: [
    { name: 'qber', description: 'error rate of the depolarising channel in both bases', defaultValue: 0.02, minimum: 0, maximum: 1 },
    { name: 'transmittance', description: 'probability η that the photon reaches Bob', defaultValue: 1, minimum: 0, maximum: 1 },
    {
      name: 'z-basis-probability',
      description: 'probability p_Z that Alice prepares, and Bob measures, in the Z basis',
      defaultValue: 0.5,
      minimum: 0,
      maximum: 1,
    },
    TEST_PROBABILITY_PARAMETER,
  ],
  build(parameters) {
    const qber = parameters['qber'];
    const transmittance = parameters['transmittance'];
    const zBasisProbability = parameters['z-basis-probability'];
    const gamma = parameters['test-probability'] ?? 0;
    const dimensionB = bobDimension(transmittance);
    const povmA: MatrixJson[] = [0, 1, 2, 3].map((i) => matrixToJson(projectorOnto([0, 1, 2, 3].map((k) => (k === i ? 1 : 0)))));
    const povmB: MatrixJson[] = bobOutcomes(zBasisProbability, dimensionB).map(({ weight, vector }) => {
      const element = projectorOnto(vector);
      for (let k = 0; k < element.re.length; k++) element.re[k] *= weight;
      return matrixToJson(element);
    });
    const keyRegisterProjector = (k: number) =>
      matrixToJson(kron(projectorOnto(k === 0 ? [1, 0] : [0, 1]), ComplexMatrix.identity(dimensionB)));
    const plain: ProblemJson = {
      dimensionA: 4,
      dimensionB,
      sourceMarginal: matrixToJson(sourceMarginal(zBasisProbability)),
      observations: [
        {
          label: 'joint-table',
          povmA,
          povmB,
          probabilities: expectedTable(qber, transmittance, zBasisProbability),
          tolerance: 0,
        },
      ],
      branches: [
        {
          label: 'key',
          krausOperators: [matrixToJson(keyBranchKrausOperator(zBasisProbability, dimensionB))],
          keyProjectors: [keyRegisterProjector(0), keyRegisterProjector(1)],
        },
        {
          label: 'no-key',
          krausOperators: [matrixToJson(noKeyBranchKrausOperator(zBasisProbability, dimensionB))],
          keyProjectors: [matrixToJson(ComplexMatrix.identity(4 * dimensionB))],
        },
      ],
      description:
        `bb84-prepare-measure: error rate ${qber}, transmittance ${transmittance}, ` +
        `Z-basis probability ${zBasisProbability}; value per round`,
    };
    if (gamma === 0) return plain;
    // In a key round the key branch has probability p_Z (Alice) · p_Z (Bob) · η (click) in an honest run.
    const keyProbability = zBasisProbability * zBasisProbability * transmittance;
    return testRoundForm(
      plain,
      gamma,
      [
        { branch: plain.branches[0], honestProbability: keyProbability, errorCorrectionEntropy: binaryEntropy(qber) },
        { branch: plain.branches[1], honestProbability: 1 - keyProbability, errorCorrectionEntropy: 0 },
      ],
      testOutcomes(qber, transmittance, zBasisProbability),
    );
  },
};
