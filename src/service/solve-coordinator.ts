// One straight path per request: cache lookup → (shared) solve on the pool → verified store → log line.
import type { Logger } from 'pino';
import { verifyResult } from '../certificate/verify.js';
import { interruptedBeforeStart } from '../frank-wolfe/finish.js';
import { RunClock } from '../frank-wolfe/state.js';
import { normaliseRequest } from '../objectives/index.js';
import type { SolveResult } from '../result/types.js';
import type { ResultCache, ResultCheck } from '../cache/result-cache.js';
import { ValidationError } from '../problem/errors.js';
import { createCancelFlag, raiseCancelFlag } from './cancel-flag.js';
import { preparedFromClone, problemOf, type PreparedSolve, type SolveInput } from './prepare.js';
import type { Verification, WorkerReply, WorkerTask } from './solve-worker.js';
import type { SolverPool } from './solver-pool.js';
import type { DeliveredResult } from './wire.js';

/** A solve in progress that identical requests join instead of starting their own. */
interface InFlightSolve {
  promise: Promise<SolveResult>;
  cancelFlag: SharedArrayBuffer;
  /** Requests still waiting for it; the solve is cancelled when the last one goes away. */
  waiters: number;
}

export interface SolveContext {
  /** Aborted when the client cancels or its deadline passes. */
  signal?: AbortSignal;
  /** Echoed in the log line. */
  requestId?: string;
  /** Work already admitted as part of a batch bypasses the queue bound. */
  admitted?: boolean;
}

/**
 * The verifier bound to one request, plus the hash check the cache relies on. Used for entries read from an
 * untrusted tier (rare: a hit is promoted to memory), so it runs here, reading the problem if this thread has not.
 */
export function checkFor(prepared: PreparedSolve): ResultCheck {
  return (result) => {
    if (result.inputHash !== prepared.inputHash) return { valid: false, reason: 'result answers another input hash' };
    return verifyResult(problemOf(prepared), prepared.request, result);
  };
}

/** The result of a request whose time limit passed before its solve could start: the trivial bound. */
function limitPassedWhileReading(prepared: PreparedSolve): SolveResult {
  const entropy = normaliseRequest(prepared.request);
  const base = { entropy: entropy.kind, alpha: entropy.kind === 'von-neumann' ? null : entropy.alpha, inputHash: prepared.inputHash };
  const result = interruptedBeforeStart(base, new RunClock(0, undefined), problemOf(prepared), 'time');
  return { ...result, message: 'the time limit passed while the request was being read and validated' };
}

export class SolveCoordinator {
  private readonly inFlight = new Map<string, InFlightSolve>();

  constructor(
    private readonly pool: SolverPool<WorkerTask, WorkerReply>,
    private readonly cache: ResultCache,
    private readonly logger: Logger,
  ) {}

  /** Validates and hashes a request on a pool thread (batch points); bad input throws ValidationError. */
  async prepare(input: SolveInput): Promise<PreparedSolve> {
    const acceptedAt = Date.now();
    const reply = await this.pool.run({ kind: 'prepare', input }, true);
    if (reply.kind === 'invalid') throw new ValidationError(reply.field, reply.reason);
    if (reply.kind !== 'prepared') throw new Error(`unexpected worker reply ${reply.kind}`);
    return { ...preparedFromClone(reply.prepared), acceptedAt };
  }

  async solve(prepared: PreparedSolve, context: SolveContext = {}): Promise<DeliveredResult> {
    const started = performance.now();
    const cached = await this.cache.lookup(prepared.inputHash, checkFor(prepared));
    if (cached !== undefined) {
      this.logSolve(prepared, cached, true, started, context);
      return { ...cached, fromCache: true };
    }
    let entry = this.inFlight.get(prepared.inputHash);
    const shared = entry !== undefined;
    if (entry === undefined) {
      entry = this.startSolve(prepared, context);
    } else {
      entry.waiters++;
    }
    const joined = entry;
    const leave = () => {
      joined.waiters--;
      if (joined.waiters === 0) {
        raiseCancelFlag(joined.cancelFlag);
        // A new identical request must not join a solve that is winding down.
        if (this.inFlight.get(prepared.inputHash) === joined) this.inFlight.delete(prepared.inputHash);
      }
    };
    if (context.signal?.aborted) leave();
    else context.signal?.addEventListener('abort', leave, { once: true });
    try {
      const result = await joined.promise;
      this.logSolve(prepared, result, false, started, context, shared);
      return { ...result, fromCache: false };
    } finally {
      context.signal?.removeEventListener('abort', leave);
    }
  }

  private startSolve(prepared: PreparedSolve, context: SolveContext): InFlightSolve {
    const cancelFlag = createCancelFlag();
    const task: WorkerTask = {
      kind: 'solve',
      problem: problemOf(prepared),
      acceptedAt: prepared.acceptedAt ?? Date.now(),
      entropy: prepared.request.kind,
      alpha: prepared.request.alpha,
      settings: prepared.settings,
      warmStart: prepared.warmStart,
      cancelFlag,
    };
    const entry: InFlightSolve = { cancelFlag, waiters: 1, promise: Promise.resolve(undefined as unknown as SolveResult) };
    entry.promise = (async () => {
      try {
        // Reading the request used up the limit: the trivial bound is all there is, and needs no thread.
        if (Date.now() - task.acceptedAt >= task.settings.timeLimitMs) return limitPassedWhileReading(prepared);
        const reply = await this.pool.run(task, context.admitted ?? false);
        if (reply.kind !== 'solved') throw new Error(`unexpected worker reply ${reply.kind}`);
        const { result, verification } = reply;
        if (result.inputHash !== prepared.inputHash) {
          this.logger.error({ inputHash: prepared.inputHash, solverHash: result.inputHash }, 'solver and service disagree on the input hash');
        }
        // The worker ran the independent verifier on this result; only a verified certificate is stored.
        await this.cache.store(prepared.inputHash, result, (): Verification => verification);
        return result;
      } finally {
        if (this.inFlight.get(prepared.inputHash) === entry) this.inFlight.delete(prepared.inputHash);
      }
    })();
    this.inFlight.set(prepared.inputHash, entry);
    return entry;
  }

  private logSolve(
    prepared: PreparedSolve,
    result: SolveResult,
    fromCache: boolean,
    started: number,
    context: SolveContext,
    shared = false,
  ): void {
    this.logger.info(
      {
        event: 'solve',
        requestId: context.requestId || undefined,
        inputHash: prepared.inputHash,
        entropy: prepared.request.kind,
        alpha: prepared.request.alpha,
        status: result.status,
        limit: result.limit,
        iterations: result.iterations,
        gap: result.gap,
        certifiedLowerBound: result.certifiedLowerBound,
        seconds: (performance.now() - started) / 1000,
        secondsSinceAccepted: prepared.acceptedAt === undefined ? undefined : (Date.now() - prepared.acceptedAt) / 1000,
        solverSeconds: result.seconds,
        fromCache,
        sharedSolve: shared || undefined,
        warmStart: prepared.warmStart !== undefined || undefined,
      },
      'solve',
    );
  }
}
