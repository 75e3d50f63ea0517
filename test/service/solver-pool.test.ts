// Plumbing of the worker pool with a stand-in worker (the solver itself is exercised in server.test.ts):
// queue bound, cancel flag across threads, and retry when a thread dies under a task.
import { afterEach, describe, expect, it } from 'vitest';
import { createCancelFlag, raiseCancelFlag } from '../../src/service/cancel-flag.js';
import { QueueFullError, SolverPool, WorkerLostError } from '../../src/service/solver-pool.js';

interface BusyTask {
  milliseconds: number;
  cancelFlag: SharedArrayBuffer;
  value: number;
}
interface BusyResult {
  value: number;
  cancelled: boolean;
  threadId: number;
}

const busyWorker = new URL('./fixtures/busy-worker.ts', import.meta.url).href;
let pool: SolverPool<BusyTask, BusyResult> | undefined;

function makePool(workers: number, queueLimit: number, maxAttempts = 2): SolverPool<BusyTask, BusyResult> {
  pool = new SolverPool<BusyTask, BusyResult>({ workers, queueLimit, maxAttempts, filename: busyWorker, execArgv: ['--import', 'tsx'] });
  return pool;
}

afterEach(async () => {
  await pool?.destroy();
  pool = undefined;
});

describe('SolverPool', () => {
  it('refuses tasks beyond workers + queueLimit and accepts again once they drain', async () => {
    const p = makePool(1, 1);
    const first = p.run({ milliseconds: 300, cancelFlag: createCancelFlag(), value: 1 });
    const second = p.run({ milliseconds: 10, cancelFlag: createCancelFlag(), value: 2 });
    await expect(p.run({ milliseconds: 10, cancelFlag: createCancelFlag(), value: 3 })).rejects.toBeInstanceOf(QueueFullError);
    // Work admitted as part of a batch bypasses the bound.
    const admitted = p.run({ milliseconds: 10, cancelFlag: createCancelFlag(), value: 4 }, true);
    expect((await first).value).toBe(1);
    expect((await second).value).toBe(2);
    expect((await admitted).value).toBe(4);
    expect(p.pending).toBe(0);
    expect((await p.run({ milliseconds: 1, cancelFlag: createCancelFlag(), value: 5 })).value).toBe(5);
  });

  it('a raised flag reaches the running thread through shared memory', async () => {
    const p = makePool(1, 0);
    const flag = createCancelFlag();
    const running = p.run({ milliseconds: 20_000, cancelFlag: flag, value: 7 });
    setTimeout(() => raiseCancelFlag(flag), 200);
    const result = await running;
    // The worker saw the flag (it would otherwise spin for its full 20 s and report cancelled: false).
    expect(result.cancelled).toBe(true);
  });

  it('retries a task whose thread was terminated, on a new thread', async () => {
    const p = makePool(1, 4);
    const running = p.run({ milliseconds: 1500, cancelFlag: createCancelFlag(), value: 9 });
    await new Promise((resolve) => setTimeout(resolve, 300));
    await p.threads[0].terminate();
    const result = await running;
    expect(result.value).toBe(9);
    expect(result.cancelled).toBe(false);
    expect(p.threadLosses).toBe(1);
  });

  it('reports the task as lost when every attempt dies', async () => {
    const p = makePool(1, 4, 1);
    const running = p.run({ milliseconds: 5000, cancelFlag: createCancelFlag(), value: 11 });
    await new Promise((resolve) => setTimeout(resolve, 300));
    await p.threads[0].terminate();
    await expect(running).rejects.toBeInstanceOf(WorkerLostError);
  });
});
