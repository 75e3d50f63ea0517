// One conversion of remote failures for every client: the command line, the sweep and the library.
import * as grpc from '@grpc/grpc-js';
import { ValidationError } from '../problem/errors.js';
import { FIELD_METADATA_KEY } from '../service/errors.js';

/** A failed call: the gRPC code, and for INVALID_ARGUMENT the field path at fault. */
export class RemoteCallError extends Error {
  constructor(
    readonly code: grpc.status,
    readonly details: string,
    readonly field: string | undefined,
  ) {
    super(`${grpc.status[code] ?? code}: ${details}`);
    this.name = 'RemoteCallError';
  }

  /** The server's reason without the field path it starts with. */
  get reason(): string {
    return this.field !== undefined && this.details.startsWith(`${this.field}: `) ? this.details.slice(this.field.length + 2) : this.details;
  }
}

export function remoteError(error: grpc.ServiceError): RemoteCallError {
  const field = error.metadata?.get(FIELD_METADATA_KEY)[0];
  return new RemoteCallError(error.code, error.details, typeof field === 'string' ? field : undefined);
}

/** An error thrown by a gRPC call (a ServiceError) as a RemoteCallError; anything else unchanged. */
export function asRemoteError(error: unknown): unknown {
  if (error instanceof RemoteCallError) return error;
  const candidate = error as Partial<grpc.ServiceError> | null;
  if (candidate !== null && typeof candidate === 'object' && typeof candidate.code === 'number' && typeof candidate.details === 'string') {
    return remoteError(candidate as grpc.ServiceError);
  }
  return error;
}

/**
 * Failures of the replica rather than of the request: another replica (or the same one later) may well answer.
 * A reset stream surfaces as INTERNAL with the HTTP/2 reason in the details.
 */
export function isReplicaFailure(error: unknown): boolean {
  if (!(error instanceof RemoteCallError)) return false;
  switch (error.code) {
    case grpc.status.UNAVAILABLE:
    case grpc.status.DEADLINE_EXCEEDED:
    case grpc.status.RESOURCE_EXHAUSTED:
    case grpc.status.ABORTED:
      return true;
    case grpc.status.INTERNAL:
    case grpc.status.UNKNOWN:
      return /RST_STREAM|Connection dropped|ECONNRESET|socket hang up|GOAWAY/i.test(error.details);
    default:
      return false;
  }
}

/** A short, human reason for a transport failure: "unreachable (connect ECONNREFUSED 127.0.0.1:1)". */
export function transportReason(error: RemoteCallError): string {
  const details = error.details.replace(/^No connection established\. Last error: /, '').replace(/\. Resolution note: ?$/, '');
  switch (error.code) {
    case grpc.status.UNAVAILABLE:
      return `unreachable (${details})`;
    case grpc.status.DEADLINE_EXCEEDED:
      return `no answer before the deadline (${details})`;
    default:
      return `${grpc.status[error.code] ?? error.code}: ${details}`;
  }
}

/**
 * How the command line reports a failed call: a bad field stays a field error ("problem.constraints[0]: …");
 * everything else names the server ("127.0.0.1:1: unreachable (…)"). The result is a ValidationError, which the
 * commands print as one line `renyi-bound: <field or address>: <reason>` with exit code 1.
 */
export function commandLineError(error: unknown, address: string): unknown {
  const remote = asRemoteError(error);
  if (!(remote instanceof RemoteCallError)) return error;
  if (remote.code === grpc.status.INVALID_ARGUMENT && remote.field !== undefined) return new ValidationError(remote.field, remote.reason);
  return new ValidationError(address, transportReason(remote));
}
