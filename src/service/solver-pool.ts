// The worker-thread pool (piscina) that runs solves off the event loop, with a bounded queue and
// a retry when a thread dies under a task.
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';

/** Tasks may carry the shared cancel flag, so that a retry after a lost thread is skipped once cancelled. */
export interface CancellableTask {
  cancelFlag?: SharedArrayBuffer;
}

export interface SolverPoolOptions {
  /** Worker threads; defaults to the number of cores. */
  workers?: number;
  /** Tasks allowed to wait for a thread beyond those running; more are refused with QueueFullError. */
  queueLimit?: number;
  /** Attempts per task when its thread dies (exit, crash, termination); at least 1. */
  maxAttempts?: number;
  /** Worker module (file URL); defaults to the solver worker next to this file. */
  filename?: string;
  /** Node flags for the worker threads; defaults to what the worker module needs. */
  execArgv?: string[];
}

/** Default number of waiting tasks per worker thread before RESOURCE_EXHAUSTED. */
export const DEFAULT_QUEUE_PER_WORKER = 16;
/** A task whose thread died is run once more on a fresh thread. */
export const DEFAULT_MAX_ATTEMPTS = 2;

/** The pool is full: waiting tasks reached the queue limit. */
export class QueueFullError extends Error {
  constructor(limit: number) {
    super(`the solver queue is full (${limit} tasks waiting); retry later or start more replicas`);
    this.name = 'QueueFullError';
  }
}

/** The worker thread running a task died on every attempt. */
export class WorkerLostError extends Error {
  constructor(attempts: number, cause: Error) {
    super(`the solver thread died ${attempts} time(s) while running this task (${cause.message})`);
    this.name = 'WorkerLostError';
  }
}

/**
 * Where the solver worker module lives. From dist/ it is the compiled .js next to this file. When this file
 * runs as TypeScript (vitest, tsx) the worker is the .ts source, loaded through tsx's ESM hooks, which a
 * worker thread registers itself via `--import tsx` (tsx is a dev dependency, so this path is for development only).
 */
export function solverWorkerLocation(): { filename: string; execArgv: string[] } {
  const here = import.meta.url;
  if (here.endsWith('.ts')) return { filename: new URL('./solve-worker.ts', here).href, execArgv: ['--import', 'tsx'] };
  return { filename: new URL('./solve-worker.js', here).href, execArgv: [] };
}

/** Piscina's messages for a thread that went away under a task. */
function isThreadLoss(error: unknown): error is Error {
  return error instanceof Error && /worker exited|Terminating worker thread/.test(error.message);
}

export class SolverPool<Task extends CancellableTask, Result> {
  readonly workers: number;
  readonly queueLimit: number;
  private readonly maxAttempts: number;
  private readonly pool: Piscina<Task, Result>;
  private active = 0;
  private lostThreads = 0;

  constructor(options: SolverPoolOptions = {}) {
    this.workers = Math.max(1, options.workers ?? availableParallelism());
    this.queueLimit = Math.max(0, options.queueLimit ?? DEFAULT_QUEUE_PER_WORKER * this.workers);
    this.maxAttempts = Math.max(1, options.maxAttempts ?? DEFAULT_MAX_ATTEMPTS);
    const location = solverWorkerLocation();
    this.pool = new Piscina<Task, Result>({
      filename: options.filename ?? location.filename,
      execArgv: options.execArgv ?? (options.filename === undefined ? location.execArgv : []),
      minThreads: this.workers,
      maxThreads: this.workers,
      // The queue bound is enforced here, before piscina, so that batches can be admitted differently.
      maxQueue: Infinity,
      // Threads stay up: starting one costs a module load.
      idleTimeout: Infinity,
    });
  }

  /** Tasks running or waiting. */
  get pending(): number {
    return this.active;
  }

  /** True when a new independent task would be refused. */
  get isFull(): boolean {
    return this.active >= this.workers + this.queueLimit;
  }

  /** How many times a thread died under a task (for logs and tests). */
  get threadLosses(): number {
    return this.lostThreads;
  }

  /** The live worker threads (tests terminate one to check that no task is lost). */
  get threads(): readonly { terminate(): Promise<number> }[] {
    return this.pool.threads;
  }

  /**
   * Runs a task. `admitted` skips the queue bound for work already accepted as a whole (the points of a batch,
   * which never hold more than `workers` tasks at once). A task whose thread dies is retried on a new thread,
   * up to maxAttempts, unless it was cancelled meanwhile.
   */
  async run(task: Task, admitted = false): Promise<Result> {
    if (!admitted && this.isFull) throw new QueueFullError(this.queueLimit);
    this.active++;
    try {
      for (let attempt = 1; ; attempt++) {
        try {
          return await this.pool.run(task);
        } catch (error) {
          if (!isThreadLoss(error)) throw error;
          this.lostThreads++;
          const cancelled = task.cancelFlag !== undefined && Atomics.load(new Int32Array(task.cancelFlag), 0) !== 0;
          if (attempt >= this.maxAttempts || cancelled) throw new WorkerLostError(attempt, error);
        }
      }
    } finally {
      this.active--;
    }
  }

  async destroy(): Promise<void> {
    await this.pool.destroy();
  }
}
