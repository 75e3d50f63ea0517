// Runs inside a pool thread: one solve per task, stopped early when the shared cancel flag goes up.
import type { MatrixJson, SolveResult, SolverSettings } from '../frank-wolfe/types.js';
import { solve } from '../frank-wolfe/solve.js';
import { matrixFromJson } from '../problem/json.js';
import type { EntropyKind } from '../problem/model.js';
import { entropyRequestFrom, problemFromJson } from '../problem/validate.js';
import { cancelFlagReader } from './cancel-flag.js';

/** A task as it crosses the thread boundary (structured clone: plain data plus the shared flag). */
export interface SolveTask {
  problemJson: unknown;
  entropy: EntropyKind;
  alpha?: number;
  settings: SolverSettings;
  warmStart?: MatrixJson;
  cancelFlag: SharedArrayBuffer;
}

export default function runSolveTask(task: SolveTask): SolveResult {
  // The problem was validated on the main thread; reading it again rebuilds the matrices as ComplexMatrix.
  const problem = problemFromJson(task.problemJson);
  const request = entropyRequestFrom(task.entropy, task.alpha);
  return solve(problem, request, task.settings, {
    isCancelled: cancelFlagReader(task.cancelFlag),
    warmStart: task.warmStart === undefined ? undefined : matrixFromJson(task.warmStart, 'warmStart'),
  });
}
