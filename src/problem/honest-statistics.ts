// The honest expected statistics a problem may carry for finite-size key lengths: the probability of every
// announcement branch in an honest run and the error-correction entropy H(S|B) of each branch
// (docs/finite-size.md). Read from protobuf JSON with field-path errors; called from the problem validator.
import { ValidationError } from './errors.js';
import { JsonMessage, finiteNumber } from './json.js';
import { PROBABILITY_SUM_TOLERANCE } from './tolerances.js';

/** renyibound.v1.HonestStatistics, validated; both lists have one entry per branch, in branch order. */
export interface HonestStatistics {
  branchProbabilities: number[];
  /** H(S|B) in bits per round of the branch, honest run (0 for branches without key). */
  errorCorrectionEntropy: number[];
}

export const HONEST_STATISTICS_FIELDS = ['branchProbabilities', 'errorCorrectionEntropy'] as const;

/** Validates `honestStatistics` against the branches: `keyCounts[c]` is the number of key projectors of branch c. */
export function honestStatisticsFromJson(json: unknown, path: string, keyCounts: readonly number[]): HonestStatistics {
  const message = JsonMessage.read(json, path, HONEST_STATISTICS_FIELDS);
  const branchCount = keyCounts.length;
  const listOfBranchLength = (name: string, emptyAllowed: boolean): number[] => {
    const values = message.list(name).map((v, c) => finiteNumber(v, `${message.field(name)}[${c}]`));
    if (values.length === 0 && emptyAllowed) return new Array<number>(branchCount).fill(0);
    if (values.length !== branchCount) {
      throw new ValidationError(message.field(name), `must hold one entry per branch (${branchCount}), got ${values.length}`);
    }
    return values;
  };
  const branchProbabilities = listOfBranchLength('branchProbabilities', false);
  branchProbabilities.forEach((p, c) => {
    if (p < 0 || p > 1) throw new ValidationError(`${message.field('branchProbabilities')}[${c}]`, `must lie in [0, 1] (got ${p})`);
  });
  const total = branchProbabilities.reduce((a, b) => a + b, 0);
  if (Math.abs(total - 1) > PROBABILITY_SUM_TOLERANCE * branchCount) {
    throw new ValidationError(message.field('branchProbabilities'), `must sum to 1 (sum ${total})`);
  }
  const errorCorrectionEntropy = listOfBranchLength('errorCorrectionEntropy', true);
  errorCorrectionEntropy.forEach((h, c) => {
    // H(S|B) lies between 0 and log of the number of key values.
    const maximum = Math.log2(keyCounts[c]);
    if (h < 0 || h > maximum + 1e-12) {
      throw new ValidationError(
        `${message.field('errorCorrectionEntropy')}[${c}]`,
        `must lie in [0, log2(number of key projectors) = ${maximum}] (got ${h})`,
      );
    }
  });
  return { branchProbabilities, errorCorrectionEntropy };
}
