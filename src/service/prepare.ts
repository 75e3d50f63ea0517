// Turns one request (problem JSON, entropy, order, settings, warm start) into a validated, hashed solve job.
import { createHash } from 'node:crypto';
import { LRUCache } from 'lru-cache';
import type { MatrixJson } from '../result/types.js';
import { DEFAULT_SETTINGS, resolveSolverSettings, SettingsError, type SolverSettings } from '../frank-wolfe/settings.js';
import { SOLVER_VERSION } from '../certificate/version.js';
import { ValidationError } from '../problem/errors.js';
import { inputHash } from '../problem/hash.js';
import { matrixToJson } from '../problem/json.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import { densityOperatorFromJson } from '../problem/state.js';
import { resolveEntropyRequest } from '../problem/entropy-request.js';
import { parseProblemJson } from '../problem/validate.js';
import { problemFromClone } from '../problem/transfer.js';
import { requestFingerprint } from './guarded-service.js';

/**
 * A request that passed validation: everything the worker, the cache and the log line need. Plain data, so that
 * it can be made in a worker thread and sent back; `problem` is present only where it was read.
 */
export interface PreparedSolve {
  /** The problem as protobuf JSON; workers re-read it (class instances do not survive the thread boundary). */
  problemJson: unknown;
  /** The validated problem, when this thread read it (see problemOf). */
  problem?: Problem;
  dimensionA: number;
  dimensionB: number;
  request: EntropyRequest;
  /** Complete settings (server defaults filled in). */
  settings: SolverSettings;
  inputHash: string;
  warmStart?: MatrixJson;
  /** Epoch milliseconds (Date.now()) from which the time limit counts: when the server began reading the request. */
  acceptedAt?: number;
}

/** What a request says before validation; `entropy` and `alpha` override the problem's own fields. */
export interface SolveInput {
  problemJson: unknown;
  entropy?: string;
  alpha?: number;
  settings?: Partial<SolverSettings>;
  warmStart?: unknown;
}

/** Re-raises a ValidationError with its field path placed under `prefix` (for example "requests[3]"). */
export function underField(prefix: string, error: unknown): never {
  if (error instanceof ValidationError && prefix !== '') throw new ValidationError(`${prefix}.${error.field}`, error.reason);
  throw error;
}

/** Problem readers name some paths from the problem root ("branches") and some with it ("problem.constraints[0]"). */
function problemField(error: unknown): never {
  if (error instanceof ValidationError && !/^problem($|[.[])/.test(error.field)) {
    throw new ValidationError(`problem.${error.field}`, error.reason);
  }
  throw error;
}

/** Server defaults filled in and every field range-checked by the solver's own rules. */
export function checkSettings(settings: Partial<SolverSettings>): SolverSettings {
  try {
    return resolveSolverSettings(settings, 'settings');
  } catch (error) {
    if (error instanceof SettingsError) throw new ValidationError(error.field, error.reason);
    throw error;
  }
}

/** Thrown by a request's checkpoint when its time limit or the client's deadline passes during validation. */
export class ValidationStopped extends Error {
  constructor(reason: string) {
    super(`${reason} passed while the request was being validated: no bound (a bound needs a validated problem)`);
    this.name = 'ValidationStopped';
  }
}

/**
 * The checkpoint validation polls: the request's time limit, counted from `acceptedAt` (epoch ms), and the
 * client's deadline (epoch ms, Infinity for none).
 */
export function validationCheckpoint(acceptedAt: number, settings: Partial<SolverSettings> | undefined, deadline: number): () => void {
  const limitMs = typeof settings?.timeLimitMs === 'number' && settings.timeLimitMs > 0 ? settings.timeLimitMs : DEFAULT_SETTINGS.timeLimitMs;
  return () => {
    const now = Date.now();
    if (now - acceptedAt > limitMs) throw new ValidationStopped(`the time limit (settings.timeLimitMs = ${limitMs})`);
    if (now > deadline) throw new ValidationStopped('the client deadline');
  };
}

/**
 * Validates one request; throws ValidationError with a field path relative to the request message. `checkpoint`
 * is polled between the parts of the problem and inside its large products (it throws to abort).
 */
export function prepareSolve(input: SolveInput, checkpoint?: () => void): PreparedSolve & { problem: Problem } {
  if (input.problemJson === undefined || input.problemJson === null) {
    throw new ValidationError('problem', 'is required');
  }
  let parsed: ReturnType<typeof parseProblemJson>;
  try {
    parsed = parseProblemJson(input.problemJson, { checkpoint });
  } catch (error) {
    problemField(error);
  }
  const request: EntropyRequest = resolveEntropyRequest({ kind: input.entropy, alpha: input.alpha }, parsed.request);
  const settings = checkSettings(input.settings ?? {});
  const prepared: PreparedSolve & { problem: Problem } = {
    problemJson: input.problemJson,
    problem: parsed.problem,
    dimensionA: parsed.problem.dimensionA,
    dimensionB: parsed.problem.dimensionB,
    request,
    settings,
    inputHash: inputHash(parsed.problem, request, settings, SOLVER_VERSION),
  };
  if (input.warmStart !== undefined && input.warmStart !== null) {
    const d = parsed.problem.dimensionA * parsed.problem.dimensionB;
    prepared.warmStart = matrixToJson(densityOperatorFromJson(input.warmStart, 'warmStart', d));
  }
  return prepared;
}

/** The validated problem of a prepared request (read again from its JSON only when it was not kept). */
export function problemOf(prepared: PreparedSolve): Problem {
  prepared.problem ??= parseProblemJson(prepared.problemJson).problem;
  return prepared.problem;
}

/** The plain-data part of a prepared request (what a client keeps of the points it sends). */
export function withoutProblem(prepared: PreparedSolve): PreparedSolve {
  const { problem: _problem, ...rest } = prepared;
  return rest;
}

/** A prepared request received from another thread: its problem's matrices rewrapped, nothing validated again. */
export function preparedFromClone(prepared: PreparedSolve): PreparedSolve {
  return prepared.problem === undefined ? prepared : { ...prepared, problem: problemFromClone(prepared.problem) };
}

/** Prepared requests remembered for repeats (validation and hashing cost milliseconds on larger problems). */
export const PREPARED_MEMO_ENTRIES = 512;

/**
 * Remembers the outcome of prepareSolve by a SHA-256 fingerprint of the request (its bytes, from the decoder): the same
 * message always validates and hashes the same way, so a repeat (the usual cache hit) is answered without
 * re-reading the problem. Failures are not remembered. Callers get a shallow copy they may change.
 */
export class PreparedRequestMemo {
  private readonly entries = new LRUCache<string, PreparedSolve>({ max: PREPARED_MEMO_ENTRIES });

  prepare(message: { requestId?: string }, prepare: () => PreparedSolve): PreparedSolve {
    // The request id is free text that does not change the answer; the decoder's fingerprint of the bytes leaves
    // it out too and is much cheaper than stringifying the message.
    const fingerprint =
      requestFingerprint(message) ?? createHash('sha256').update(JSON.stringify({ ...message, requestId: '' })).digest('hex');
    let prepared = this.entries.get(fingerprint);
    if (prepared === undefined) {
      prepared = prepare();
      this.entries.set(fingerprint, prepared);
    }
    return { ...prepared };
  }
}
