// Test-round forms of the example protocols: with probability γ a round is a test round whose coarse-grained
// outcome is announced (one scored branch per outcome), otherwise a key round. The problem also carries the
// honest expected distribution of the announcements and the error-correction entropy of each key branch, which
// is what `key-length` needs (docs/finite-size.md, "Builders with testing").
import { ComplexMatrix, scale } from '../linear-algebra/complex-matrix.js';
import { matrixToJson, type AnnouncementBranchJson, type MatrixJson, type ProblemJson } from '../problem/json.js';

/** h(q) = −q log q − (1−q) log(1−q) in bits (0 at the ends). */
export function binaryEntropy(q: number): number {
  if (q <= 0 || q >= 1) return 0;
  return -q * Math.log2(q) - (1 - q) * Math.log2(1 - q);
}

/** A branch of the key round, its honest probability within a key round, and H(S|B) per such round. */
export interface KeyRoundBranch {
  branch: AnnouncementBranchJson;
  honestProbability: number;
  errorCorrectionEntropy: number;
}

/** A coarse-grained test outcome: Kraus operators with Σ K†K = its POVM element, and its honest probability. */
export interface TestOutcome {
  label: string;
  krausOperators: ComplexMatrix[];
  honestProbability: number;
}

/** The command-line parameter every builder with a test-round form takes (0 keeps the plain form). */
export const TEST_PROBABILITY_PARAMETER = {
  name: 'test-probability',
  description: 'probability γ of a test round (0: no test rounds, the plain problem)',
  defaultValue: 0,
  minimum: 0,
  maximum: 0.999,
};

function scaledMatrix(m: MatrixJson, factor: number): MatrixJson {
  const scaled: MatrixJson = { rows: m.rows, cols: m.cols, re: m.re.map((x) => x * factor) };
  if (m.im !== undefined) scaled.im = m.im.map((x) => x * factor);
  return scaled;
}

/**
 * The test-round form of `base`: key-round branches with Kraus operators scaled by √(1−γ), one keyless branch
 * per test outcome with Kraus operators scaled by √γ (completeness is kept: (1−γ)·1 + γ·1), and
 * `honestStatistics` with the probability of every branch in an honest run.
 */
export function testRoundForm(
  base: ProblemJson,
  gamma: number,
  keyRound: KeyRoundBranch[],
  tests: TestOutcome[],
): ProblemJson {
  const dimension = base.dimensionA * base.dimensionB;
  const keyBranches = keyRound.map(({ branch }) => ({
    ...branch,
    krausOperators: branch.krausOperators.map((k) => scaledMatrix(k, Math.sqrt(1 - gamma))),
  }));
  const testBranches: AnnouncementBranchJson[] = tests.map((t) => ({
    label: t.label,
    krausOperators: t.krausOperators.map((k) => matrixToJson(scale(k, Math.sqrt(gamma)))),
    keyProjectors: [matrixToJson(ComplexMatrix.identity(dimension))],
  }));
  return {
    ...base,
    branches: [...keyBranches, ...testBranches],
    honestStatistics: {
      branchProbabilities: [
        ...keyRound.map((b) => (1 - gamma) * b.honestProbability),
        ...tests.map((t) => gamma * t.honestProbability),
      ],
      errorCorrectionEntropy: [...keyRound.map((b) => b.errorCorrectionEntropy), ...tests.map(() => 0)],
    },
    description: `${base.description ?? ''}; test rounds with probability ${gamma}`,
  };
}
