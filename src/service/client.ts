// Calling a renyi-bound server: unary solve, batch stream, verify and health, with results in the solver's
// own JSON shape (as `renyi-bound solve` prints it).
import * as grpc from '@grpc/grpc-js';
import * as protoLoader from '@grpc/proto-loader';
import { protoPath as healthProtoPath } from 'grpc-health-check';
import type { MatrixJson, SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { ValidationError } from '../problem/errors.js';
import { entropyKindFrom, isUnspecifiedEntropy } from '../problem/entropy-request.js';
import { PROTO_LOADER_OPTIONS } from '../problem/proto-options.js';
import { parseProblemJson } from '../problem/validate.js';
import { FIELD_METADATA_KEY } from './errors.js';
import type { BatchItem__Output } from './generated/renyibound/v1/BatchItem.js';
import type { BatchRequest } from './generated/renyibound/v1/BatchRequest.js';
import type { EntropyKind } from './generated/renyibound/v1/EntropyKind.js';
import type { Problem } from './generated/renyibound/v1/Problem.js';
import type { RenyiBoundClient } from './generated/renyibound/v1/RenyiBound.js';
import { loadServicePackage } from './proto.js';
import { entropyKindToWire, matrixToWire, resultFromWire, resultToWire, settingsToWire, type DeliveredResult } from './wire.js';

/** One problem to send: the problem as protobuf JSON (the same file `renyi-bound solve` reads). */
export interface RemoteSolveRequest {
  problem: unknown;
  /** 'von-neumann' … or the proto enum name; when absent the problem's own entropy field is used. */
  entropy?: string;
  alpha?: number;
  settings?: Partial<SolverSettings>;
  warmStart?: MatrixJson;
  requestId?: string;
}

export interface CallOptions {
  /** Deadline of the call in milliseconds from now. */
  deadlineMs?: number;
}

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
}

function remoteError(error: grpc.ServiceError): RemoteCallError {
  const field = error.metadata?.get(FIELD_METADATA_KEY)[0];
  return new RemoteCallError(error.code, error.details, typeof field === 'string' ? field : undefined);
}

function callOptions(options: CallOptions): grpc.CallOptions {
  return options.deadlineMs === undefined ? {} : { deadline: new Date(Date.now() + options.deadlineMs) };
}

const clients = new Map<string, RenyiBoundClient>();

/** A client for `address` (host:port), kept for reuse; plaintext, as the server binds to loopback by default. */
export function renyiBoundClient(address: string): RenyiBoundClient {
  let client = clients.get(address);
  if (client === undefined) {
    const Client = loadServicePackage().renyibound.v1.RenyiBound;
    client = new Client(address, grpc.credentials.createInsecure());
    clients.set(address, client);
  }
  return client;
}

/** Closes the clients this module opened (lets a command-line process exit promptly). */
export function closeClients(): void {
  for (const client of clients.values()) client.close();
  clients.clear();
}

function snakeToCamel(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(snakeToCamel);
  if (value === null || typeof value !== 'object') return value;
  const out: Record<string, unknown> = {};
  for (const [key, field] of Object.entries(value as Record<string, unknown>)) {
    out[key.replace(/_([a-z])/g, (_, c: string) => c.toUpperCase())] = snakeToCamel(field);
  }
  return out;
}

/**
 * The problem JSON for the wire. It is validated here first: the protobuf encoder silently drops fields it does
 * not know, so a misspelt field would otherwise vanish instead of being reported.
 */
export function problemToWire(problem: unknown): Problem {
  parseProblemJson(problem);
  return snakeToCamel(problem) as Problem;
}

function entropyToWire(entropy: string | undefined): EntropyKind {
  if (isUnspecifiedEntropy(entropy)) return 'ENTROPY_KIND_UNSPECIFIED';
  return entropyKindToWire(entropyKindFrom(entropy)) as EntropyKind;
}

/** Solves one problem on a server. Bad input surfaces as ValidationError (local) or RemoteCallError (server). */
export async function solveRemote(address: string, request: RemoteSolveRequest, options: CallOptions = {}): Promise<DeliveredResult> {
  const message = {
    problem: problemToWire(request.problem),
    entropy: entropyToWire(request.entropy),
    alpha: request.alpha,
    settings: settingsToWire(request.settings ?? {}),
    warmStart: request.warmStart === undefined ? null : matrixToWire(request.warmStart),
    requestId: request.requestId ?? '',
  };
  return new Promise((resolve, reject) => {
    renyiBoundClient(address).Solve(message, callOptions(options), (error, reply) => {
      if (error) reject(remoteError(error));
      else if (!reply?.result) reject(new Error('the server replied without a result'));
      else resolve(resultFromWire(reply.result));
    });
  });
}

/** A batch item with its result in the solver's JSON shape. */
export interface RemoteBatchItem {
  index: number;
  point: Record<string, number>;
  entropy: string;
  result?: DeliveredResult;
  error?: { field: string; message: string };
  done: number;
  total: number;
}

function batchItemFromWire(item: BatchItem__Output): RemoteBatchItem {
  const out: RemoteBatchItem = {
    index: item.index,
    point: { ...item.point },
    entropy: item.entropy,
    done: item.progress?.done ?? 0,
    total: item.progress?.total ?? 0,
  };
  if (item.result) out.result = resultFromWire(item.result);
  if (item.errorMessage !== '') out.error = { field: item.errorField, message: item.errorMessage };
  return out;
}

/** A running batch: its items as they arrive, and a way to cancel it. */
export interface RemoteBatch {
  items: AsyncIterable<RemoteBatchItem>;
  cancel(): void;
}

/** Starts a batch (a request list or a grid, in protobuf JSON form); iterate `items` to receive the results. */
export function solveBatchRemote(address: string, request: BatchRequest, options: CallOptions = {}): RemoteBatch {
  const call = renyiBoundClient(address).SolveBatch(request, callOptions(options));
  async function* items(): AsyncGenerator<RemoteBatchItem> {
    try {
      for await (const item of call as AsyncIterable<BatchItem__Output>) yield batchItemFromWire(item);
    } catch (error) {
      if ((error as grpc.ServiceError).code !== undefined) throw remoteError(error as grpc.ServiceError);
      throw error;
    }
  }
  return { items: items(), cancel: () => call.cancel() };
}

/** Asks the server to re-check a result's certificate against a problem. */
export async function verifyRemote(
  address: string,
  request: { problem: unknown; entropy?: string; alpha?: number; result: SolveResult },
  options: CallOptions = {},
): Promise<{ valid: boolean; certifiedLowerBound: number | null; reason: string }> {
  return new Promise((resolve, reject) => {
    const message = {
      problem: problemToWire(request.problem),
      entropy: entropyToWire(request.entropy),
      alpha: request.alpha,
      result: resultToWire(request.result, false),
    };
    renyiBoundClient(address).Verify(message, callOptions(options), (error, reply) => {
      if (error) reject(remoteError(error));
      else resolve({ valid: reply!.valid, certifiedLowerBound: reply!.certifiedLowerBound ?? null, reason: reply!.reason });
    });
  });
}

/** Health status names of grpc.health.v1, plus SERVICE_UNKNOWN and UNREACHABLE for a failed check. */
export type HealthStatusName = 'UNKNOWN' | 'SERVING' | 'NOT_SERVING' | 'SERVICE_UNKNOWN' | 'UNREACHABLE';

interface HealthClient extends grpc.Client {
  Check(
    request: { service: string },
    options: grpc.CallOptions,
    callback: (error: grpc.ServiceError | null, reply?: { status: string }) => void,
  ): grpc.ClientUnaryCall;
}

/** Asks the standard health service; `service` '' means the server as a whole. */
export function checkHealth(address: string, service = '', options: CallOptions = { deadlineMs: 3000 }): Promise<HealthStatusName> {
  const definition = protoLoader.loadSync(healthProtoPath, PROTO_LOADER_OPTIONS);
  const Health = (grpc.loadPackageDefinition(definition) as unknown as {
    grpc: { health: { v1: { Health: new (address: string, credentials: grpc.ChannelCredentials) => HealthClient } } };
  }).grpc.health.v1.Health;
  const client = new Health(address, grpc.credentials.createInsecure());
  return new Promise((resolve) => {
    client.Check({ service }, callOptions(options), (error, reply) => {
      client.close();
      if (error) resolve(error.code === grpc.status.NOT_FOUND ? 'SERVICE_UNKNOWN' : 'UNREACHABLE');
      else resolve((reply?.status ?? 'UNKNOWN') as HealthStatusName);
    });
  });
}
