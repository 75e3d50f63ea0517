// Runs inside a pool thread. Two kinds of task: preparing a request (validation and input hash, the costly
// part of reading a problem) and solving one, after which the result's certificate is verified right there, so
// that the event loop only moves data. The validated problem crosses threads as a structured clone, never
// validated twice; a solve gets what is left of its time limit, counted from when the request was accepted.
import { isCacheable } from '../cache/result-cache.js';
import { verifyResult } from '../certificate/verify.js';
import type { MatrixJson, SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { solve } from '../frank-wolfe/solve.js';
import { ValidationError } from '../problem/errors.js';
import { matrixFromJson } from '../problem/json.js';
import type { EntropyKind, Problem } from '../problem/model.js';
import { problemFromClone } from '../problem/transfer.js';
import { entropyRequestFrom } from '../problem/entropy-request.js';
import { cancelFlagReader } from './cancel-flag.js';
import { prepareSolve, type PreparedSolve, type SolveInput } from './prepare.js';

/** Validate and hash one request. */
export interface PrepareTask {
  kind: 'prepare';
  input: SolveInput;
  cancelFlag?: undefined;
}

/** Solve one prepared request and verify the result when the cache would keep it. */
export interface SolveTask {
  kind: 'solve';
  /** The validated problem (a structured clone: matrices arrive as plain records). */
  problem: Problem;
  /** Epoch milliseconds from which settings.timeLimitMs counts. */
  acceptedAt: number;
  entropy: EntropyKind;
  alpha?: number;
  settings: SolverSettings;
  warmStart?: MatrixJson;
  cancelFlag: SharedArrayBuffer;
}

export type WorkerTask = PrepareTask | SolveTask;

/** The independent verifier's verdict on a fresh result (results without a certificate are simply not valid). */
export interface Verification {
  valid: boolean;
  reason: string;
}

export type WorkerReply =
  | { kind: 'prepared'; prepared: PreparedSolve }
  | { kind: 'invalid'; field: string; reason: string }
  | { kind: 'solved'; result: SolveResult; verification: Verification };

function prepare(task: PrepareTask): WorkerReply {
  try {
    return { kind: 'prepared', prepared: prepareSolve(task.input) };
  } catch (error) {
    // Error classes do not survive the thread boundary; the field path does.
    if (error instanceof ValidationError) return { kind: 'invalid', field: error.field, reason: error.reason };
    throw error;
  }
}

function solveAndVerify(task: SolveTask): WorkerReply {
  const problem = problemFromClone(task.problem);
  const request = entropyRequestFrom(task.entropy, task.alpha);
  // Validation and the wait for this thread already used part of the limit (1 ms left still yields the trivial bound).
  const timeLimitMs = Math.max(1, task.settings.timeLimitMs - (Date.now() - task.acceptedAt));
  const result = solve(problem, request, { ...task.settings, timeLimitMs }, {
    isCancelled: cancelFlagReader(task.cancelFlag),
    warmStart: task.warmStart === undefined ? undefined : matrixFromJson(task.warmStart, 'warmStart'),
  });
  // Only a result the cache would keep is verified: results stopped by a time limit or a cancellation never are,
  // so the verifier never runs after a deadline.
  const verification = isCacheable(result) ? verifyResult(problem, request, result) : { valid: false, reason: 'not cacheable' };
  return { kind: 'solved', result, verification: { valid: verification.valid, reason: verification.reason } };
}

export default function runWorkerTask(task: WorkerTask): WorkerReply {
  return task.kind === 'prepare' ? prepare(task) : solveAndVerify(task);
}
