// The DecoyRate RPC handler: each request runs in a worker thread (decoy-rate-worker.ts computes the reply).
import { availableParallelism } from 'node:os';
import { status, type handleUnaryCall } from '@grpc/grpc-js';
import { Piscina } from 'piscina';
import { ValidationError } from '../problem/errors.js';
import type { DecoyRateReply } from './generated/renyibound/v1/DecoyRateReply.js';
import type { DecoyRateRequest__Output } from './generated/renyibound/v1/DecoyRateRequest.js';
import { toServiceError } from './errors.js';

/** Most DecoyRate requests computing at once, and waiting beyond those (more are refused with RESOURCE_EXHAUSTED). */
export const MAX_CONCURRENT_DECOY_RATES = Math.max(1, availableParallelism());
export const MAX_WAITING_DECOY_RATES = 4 * MAX_CONCURRENT_DECOY_RATES;

/** The worker module: compiled JavaScript, or the TypeScript source through tsx under vitest/tsx (as the solver pool does). */
function workerLocation(): { filename: string; execArgv: string[] } {
  const here = import.meta.url;
  if (here.endsWith('.ts')) return { filename: new URL('./decoy-rate-worker.ts', here).href, execArgv: ['--import', 'tsx'] };
  return { filename: new URL('./decoy-rate-worker.js', here).href, execArgv: [] };
}

let pool: Piscina<DecoyRateRequest__Output, DecoyWorkerMessage> | undefined;

/**
 * The unary handler. Requests run in worker threads (a point is seconds of CPU; the event loop stays free for
 * health checks and other calls); threads end after a second idle, and a cancelled call aborts its task.
 */
export function decoyRateHandler(): handleUnaryCall<DecoyRateRequest__Output, DecoyRateReply> {
  return (call, callback) => {
    pool ??= new Piscina({
      ...workerLocation(),
      minThreads: 0,
      maxThreads: MAX_CONCURRENT_DECOY_RATES,
      maxQueue: MAX_WAITING_DECOY_RATES,
      idleTimeout: 1000,
    });
    const controller = new AbortController();
    const cancel = () => controller.abort();
    call.on('cancelled', cancel);
    pool.run(call.request, { signal: controller.signal }).then(
      (message) => {
        call.removeListener('cancelled', cancel);
        if ('reply' in message) callback(null, message.reply);
        else callback(toServiceError(message.field === undefined ? new Error(message.reason) : new ValidationError(message.field, message.reason)));
      },
      (error: unknown) => {
        call.removeListener('cancelled', cancel);
        if (controller.signal.aborted) callback({ code: status.CANCELLED, details: 'DecoyRate cancelled by the client' });
        else if (error instanceof Error && /queue is at limit/i.test(error.message)) {
          callback({ code: status.RESOURCE_EXHAUSTED, details: `DecoyRate: ${MAX_CONCURRENT_DECOY_RATES} running and ${MAX_WAITING_DECOY_RATES} waiting already` });
        } else callback(toServiceError(error));
      },
    );
  };
}

/** What the worker returns: the reply, or an error (a field for bad input). */
export type DecoyWorkerMessage = { reply: DecoyRateReply } | { field?: string; reason: string };
