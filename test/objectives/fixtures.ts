// Small problems shared by the objective and solver tests.
import { ComplexMatrix, kron } from '../../src/linear-algebra/complex-matrix.js';
import type { AnnouncementBranch, Problem } from '../../src/problem/model.js';
import { randomIsometry, type RandomSource } from '../helpers/random.js';

/** Projector |k⟩⟨k| on C^n. */
export function basisProjector(n: number, k: number): ComplexMatrix {
  const m = ComplexMatrix.zeros(n);
  m.re[k * n + k] = 1;
  return m;
}

/** One branch, identity Kraus operator, key = Alice's computational-basis outcome (d_A = key alphabet). */
export function aliceKeyProblem(dimensionA: number, dimensionB: number): Problem {
  return {
    dimensionA,
    dimensionB,
    constraints: [],
    branches: [
      {
        label: 'key',
        krausOperators: [ComplexMatrix.identity(dimensionA * dimensionB)],
        keyProjectors: Array.from({ length: dimensionA }, (_, k) =>
          kron(basisProjector(dimensionA, k), ComplexMatrix.identity(dimensionB)),
        ),
        score: 0,
      },
    ],
  };
}

/** Bell-diagonal two-qubit state with weights on (Φ+, Φ−, Ψ+, Ψ−). */
export function bellDiagonal(weights: readonly number[]): ComplexMatrix {
  const s = Math.SQRT1_2;
  const vectors = [
    [s, 0, 0, s],
    [s, 0, 0, -s],
    [0, s, s, 0],
    [0, s, -s, 0],
  ];
  const m = ComplexMatrix.zeros(4);
  weights.forEach((w, k) => {
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) m.re[i * 4 + j] += w * vectors[k][i] * vectors[k][j];
  });
  return m;
}

/**
 * A complete random instrument: the rows of a random isometry C^d → C^{Σ outputs} split into branches; each
 * branch output split into `keyValues` diagonal key blocks. Scores as given.
 */
export function randomInstrumentProblem(
  dimensionA: number,
  dimensionB: number,
  outputs: readonly number[],
  keyValues: readonly number[],
  scores: readonly number[],
  rng: RandomSource,
): Problem {
  const d = dimensionA * dimensionB;
  const total = outputs.reduce((s, n) => s + n, 0);
  const isometry = randomIsometry(total, d, rng);
  let offset = 0;
  const branches: AnnouncementBranch[] = outputs.map((n, c) => {
    const kraus = new ComplexMatrix(n, d);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < d; j++) {
        kraus.re[i * d + j] = isometry.re[(offset + i) * d + j];
        kraus.im[i * d + j] = isometry.im[(offset + i) * d + j];
      }
    }
    offset += n;
    const blocks = keyValues[c];
    const keyProjectors = Array.from({ length: blocks }, (_, k) => {
      const p = ComplexMatrix.zeros(n);
      for (let i = 0; i < n; i++) if (i % blocks === k) p.re[i * n + i] = 1;
      return p;
    });
    return { label: `branch ${c}`, krausOperators: [kraus], keyProjectors, score: scores[c] };
  });
  return { dimensionA, dimensionB, constraints: [], branches };
}

export const binaryEntropy = (q: number): number =>
  q <= 0 || q >= 1 ? 0 : -q * Math.log2(q) - (1 - q) * Math.log2(1 - q);
