// How failures become gRPC statuses: the code says who is at fault, the message names the field.
import * as grpc from '@grpc/grpc-js';
import { ValidationError } from '../problem/errors.js';
import { ValidationStopped } from './prepare.js';
import { QueueFullError, WorkerLostError } from './solver-pool.js';

/** Trailing-metadata key carrying the offending field path of an INVALID_ARGUMENT. */
export const FIELD_METADATA_KEY = 'renyi-bound-field';

export function toServiceError(error: unknown): Partial<grpc.StatusObject> {
  if (error instanceof ValidationError) {
    const metadata = new grpc.Metadata();
    metadata.set(FIELD_METADATA_KEY, error.field);
    return { code: grpc.status.INVALID_ARGUMENT, details: `${error.field}: ${error.reason}`, metadata };
  }
  if (error instanceof QueueFullError) return { code: grpc.status.RESOURCE_EXHAUSTED, details: error.message };
  if (error instanceof WorkerLostError) return { code: grpc.status.UNAVAILABLE, details: error.message };
  if (error instanceof ValidationStopped) return { code: grpc.status.DEADLINE_EXCEEDED, details: error.message };
  return { code: grpc.status.INTERNAL, details: error instanceof Error ? error.message : String(error) };
}
