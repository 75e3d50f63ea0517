// honestStatistics validation: every defect names its field path and the reason.
import { describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';

const withHonest = (honest: unknown) => ({ ...buildExample('bb84-entangled', { 'test-probability': 0.1 }), honestStatistics: honest });

describe('honestStatistics', () => {
  it('is read from the builder output and from snake_case JSON', () => {
    expect(problemFromJson(withHonest({ branch_probabilities: [0.9, 0.095, 0.005] })).honestStatistics).toEqual({
      branchProbabilities: [0.9, 0.095, 0.005],
      errorCorrectionEntropy: [0, 0, 0],
    });
  });

  it.each([
    [{ branchProbabilities: [0.9, 0.1] }, 'honestStatistics.branchProbabilities: must hold one entry per branch (3), got 2'],
    [{ branchProbabilities: [0.9, 0.2, -0.1] }, 'honestStatistics.branchProbabilities[2]: must lie in [0, 1] (got -0.1)'],
    [{ branchProbabilities: [0.9, 0.05, 0.01] }, 'honestStatistics.branchProbabilities: must sum to 1'],
    [{ branchProbabilities: [0.9, 0.05, 0.05], errorCorrectionEntropy: [1.5, 0, 0] }, 'honestStatistics.errorCorrectionEntropy[0]: must lie in [0, log2(number of key projectors) = 1]'],
    [{ branchProbabilities: [0.9, 0.05, 0.05], errorCorrectionEntropy: [0.2, 0.1, 0] }, 'honestStatistics.errorCorrectionEntropy[1]: must lie in [0, log2(number of key projectors) = 0]'],
    [{ branchProbabilities: [0.9, 0.05, 'x'] }, 'honestStatistics.branchProbabilities[2]'],
    [{ branchProbability: [1] }, 'honestStatistics.branchProbability: unknown field'],
  ])('rejects %j', (honest, message) => {
    expect(() => problemFromJson(withHonest(honest))).toThrow(message);
  });
});
