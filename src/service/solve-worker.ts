// Runs inside a pool thread. Two kinds of task: preparing a request (validation and input hash, the costly
// part of reading a problem) and solving one, after which the result's certificate is verified right there, so
// that the event loop only moves data.
import { verifyResult } from '../certificate/verify.js';
import type { MatrixJson, SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { solve } from '../frank-wolfe/solve.js';
import { ValidationError } from '../problem/errors.js';
import { matrixFromJson } from '../problem/json.js';
import type { EntropyKind } from '../problem/model.js';
import { problemFromJson } from '../problem/validate.js';
import { entropyRequestFrom } from '../problem/entropy-request.js';
import { cancelFlagReader } from './cancel-flag.js';
import { prepareSolve, withoutProblem, type PreparedSolve, type SolveInput } from './prepare.js';

/** Validate and hash one request. */
export interface PrepareTask {
  kind: 'prepare';
  input: SolveInput;
  cancelFlag?: undefined;
}

/** Solve one prepared request and verify the certificate it produced. */
export interface SolveTask {
  kind: 'solve';
  problemJson: unknown;
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
    return { kind: 'prepared', prepared: withoutProblem(prepareSolve(task.input)) };
  } catch (error) {
    // Error classes do not survive the thread boundary; the field path does.
    if (error instanceof ValidationError) return { kind: 'invalid', field: error.field, reason: error.reason };
    throw error;
  }
}

function solveAndVerify(task: SolveTask): WorkerReply {
  // The problem was validated already; reading it again rebuilds the matrices as ComplexMatrix.
  const problem = problemFromJson(task.problemJson);
  const request = entropyRequestFrom(task.entropy, task.alpha);
  const result = solve(problem, request, task.settings, {
    isCancelled: cancelFlagReader(task.cancelFlag),
    warmStart: task.warmStart === undefined ? undefined : matrixFromJson(task.warmStart, 'warmStart'),
  });
  const verification = result.certificate === null ? { valid: false, reason: 'no certificate' } : verifyResult(problem, request, result);
  return { kind: 'solved', result, verification: { valid: verification.valid, reason: verification.reason } };
}

export default function runWorkerTask(task: WorkerTask): WorkerReply {
  return task.kind === 'prepare' ? prepare(task) : solveAndVerify(task);
}
