// Calling renyi-bound servers: unary solve (retried on another replica when one fails), batch stream, verify
// and health, with results in the solver's own JSON shape (as `renyi-bound solve` prints it).
import * as grpc from '@grpc/grpc-js';
import * as protoLoader from '@grpc/proto-loader';
import { protoPath as healthProtoPath } from 'grpc-health-check';
import type { MatrixJson, SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { ValidationError } from '../problem/errors.js';
import { PROTO_LOADER_OPTIONS } from '../problem/proto-options.js';
import { parseProblemJson } from '../problem/validate.js';
import type { BatchItem__Output } from '../service/generated/renyibound/v1/BatchItem.js';
import type { BatchRequest } from '../service/generated/renyibound/v1/BatchRequest.js';
import type { EntropyKind } from '../service/generated/renyibound/v1/EntropyKind.js';
import type { Problem } from '../service/generated/renyibound/v1/Problem.js';
import type { RenyiBoundClient } from '../service/generated/renyibound/v1/RenyiBound.js';
import type { SolveRequest } from '../service/generated/renyibound/v1/SolveRequest.js';
import { loadServicePackage } from '../service/proto.js';
import { entropyKindToWire, matrixToWire, resultFromWire, resultToWire, settingsToWire, type DeliveredResult } from '../service/wire.js';
import { channelSettings } from './channel.js';
import { clientSecurityKey, getDefaultClientSecurity } from '../service/security.js';
import { parseServers, resolveServers } from './servers.js';
import { asRemoteError, isReplicaFailure, remoteError } from './errors.js';

export { RemoteCallError } from './errors.js';

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
  /** Deadline of the call (of each attempt, when retried) in milliseconds from now. */
  deadlineMs?: number;
  /** Attempts of a call whose replica fails (UNAVAILABLE, reset stream, deadline, full queue); default 1. */
  attempts?: number;
  /** Wait for a connection instead of failing at once while no replica is reachable. */
  waitForReady?: boolean;
  /** Aborts the call (and any retry). */
  signal?: AbortSignal;
}

function callOptions(options: CallOptions): grpc.CallOptions {
  return options.deadlineMs === undefined ? {} : { deadline: new Date(Date.now() + options.deadlineMs) };
}

const clients = new Map<string, Promise<{ client: RenyiBoundClient; replicas: number }>>();
const plainClients = new Map<string, RenyiBoundClient>();

/** Clients with different credentials are never shared. */
function cacheKey(servers: string): string {
  return `${servers} ${clientSecurityKey(getDefaultClientSecurity())}`;
}

function newClient(target: string): RenyiBoundClient {
  const Client = loadServicePackage().renyibound.v1.RenyiBound;
  const { credentials, options } = channelSettings();
  return new Client(target, credentials, options);
}

/**
 * The generated client for `servers` when no name lookup is needed first (one address, a list of IP addresses, or
 * one DNS name, which gRPC resolves itself), kept for reuse; new RPCs of other modules call it directly.
 * A list of names needs `connect`.
 */
export function renyiBoundClient(servers: string): RenyiBoundClient {
  const key = cacheKey(servers);
  let client = plainClients.get(key);
  if (client === undefined) {
    const { target } = parseServers(servers);
    if (target === '') throw new ValidationError('--server', 'a list of host names must be resolved first (use connect)');
    client = newClient(target);
    plainClients.set(key, client);
  }
  return client;
}

/**
 * The client for `servers` (see parseServers: host:port, a comma-separated list, or a DNS name), kept for reuse.
 * Calls on it are spread round robin over every address; `replicas` is how many were found.
 */
export function connect(servers: string): Promise<{ client: RenyiBoundClient; replicas: number }> {
  const key = cacheKey(servers);
  let entry = clients.get(key);
  if (entry === undefined) {
    entry = (async () => {
      const resolved = await resolveServers(parseServers(servers));
      return { client: newClient(resolved.servers.target), replicas: resolved.replicas };
    })();
    entry.catch(() => clients.delete(key));
    clients.set(key, entry);
  }
  return entry;
}

/** Closes the clients this module opened (lets a command-line process exit promptly). */
export function closeClients(): void {
  for (const entry of clients.values()) void entry.then(({ client }) => client.close(), () => {});
  for (const client of plainClients.values()) client.close();
  clients.clear();
  plainClients.clear();
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
  if (entropy === undefined) return 'ENTROPY_KIND_UNSPECIFIED';
  const wire = /^[A-Z_]+$/.test(entropy) ? entropy : entropyKindToWire(entropy);
  if (wire === 'ENTROPY_KIND_UNSPECIFIED') throw new ValidationError('entropy', `unknown entropy kind ${JSON.stringify(entropy)}`);
  return wire as EntropyKind;
}

/** The wire message of a request; `validate` false skips the local check (the caller validated already). */
export function solveRequestToWire(request: RemoteSolveRequest, validate = true): SolveRequest {
  return {
    problem: validate ? problemToWire(request.problem) : (snakeToCamel(request.problem) as Problem),
    entropy: entropyToWire(request.entropy),
    alpha: request.alpha,
    settings: settingsToWire(request.settings ?? {}),
    warmStart: request.warmStart === undefined ? null : matrixToWire(request.warmStart),
    requestId: request.requestId ?? '',
  };
}

/** Pause before retry `attempt` (1, 2, …): 100 ms doubling to 2 s. */
export function retryDelayMs(attempt: number): number {
  return Math.min(2000, 100 * 2 ** (attempt - 1));
}

function pause(milliseconds: number, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    const timer = setTimeout(resolve, milliseconds);
    signal?.addEventListener('abort', () => (clearTimeout(timer), resolve()), { once: true });
  });
}

/**
 * Sends one wire request. A replica failure (UNAVAILABLE, reset stream, deadline, full queue) is retried up to
 * `attempts` times; round robin sends each attempt to the next ready replica, so a dead one is passed over.
 * `onRetry` hears about every failed attempt that is retried.
 */
export async function solveWire(
  servers: string,
  message: SolveRequest,
  options: CallOptions = {},
  onRetry?: (error: Error, attempt: number) => void,
): Promise<DeliveredResult> {
  const { client } = await connect(servers);
  const attempts = Math.max(1, options.attempts ?? 1);
  for (let attempt = 1; ; attempt++) {
    try {
      return await new Promise<DeliveredResult>((resolve, reject) => {
        const call = client.Solve(message, callOptions(options), (error, reply) => {
          options.signal?.removeEventListener('abort', cancel);
          if (error) reject(remoteError(error));
          else if (!reply?.result) reject(new Error('the server replied without a result'));
          else resolve(resultFromWire(reply.result));
        });
        const cancel = () => call.cancel();
        options.signal?.addEventListener('abort', cancel, { once: true });
      });
    } catch (error) {
      if (attempt >= attempts || !isReplicaFailure(error) || options.signal?.aborted) throw error;
      onRetry?.(error as Error, attempt);
      await pause(retryDelayMs(attempt), options.signal);
    }
  }
}

/** Solves one problem on a server. Bad input surfaces as ValidationError (local) or RemoteCallError (server). */
export async function solveRemote(servers: string, request: RemoteSolveRequest, options: CallOptions = {}): Promise<DeliveredResult> {
  return solveWire(servers, solveRequestToWire(request), options);
}

/** A batch item with its result in the solver's JSON shape. */
export interface RemoteBatchItem {
  index: number;
  point: Record<string, number>;
  entropy: string;
  result?: DeliveredResult;
  error?: { field: string; message: string };
  /** Assembling from the cache: no verified result for this point was found (nothing was computed). */
  missing?: boolean;
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

/**
 * Starts a batch (a request list or a grid, in protobuf JSON form) on one replica: the stream stays with the
 * server it was sent to (runSweep spreads a grid over replicas point by point instead).
 */
export function solveBatchRemote(servers: string, request: BatchRequest, options: CallOptions = {}): RemoteBatch {
  let call: grpc.ClientReadableStream<BatchItem__Output> | undefined;
  let cancelled = false;
  async function* items(): AsyncGenerator<RemoteBatchItem> {
    const { client } = await connect(servers);
    if (cancelled) return;
    call = client.SolveBatch(request, callOptions(options));
    try {
      for await (const item of call as AsyncIterable<BatchItem__Output>) yield batchItemFromWire(item);
    } catch (error) {
      throw asRemoteError(error);
    }
  }
  return {
    items: items(),
    cancel: () => {
      cancelled = true;
      call?.cancel();
    },
  };
}

/** Asks the server to re-check a result's certificate against a problem. */
export async function verifyRemote(
  servers: string,
  request: { problem: unknown; entropy?: string; alpha?: number; result: SolveResult },
  options: CallOptions = {},
): Promise<{ valid: boolean; certifiedLowerBound: number | null; reason: string }> {
  const { client } = await connect(servers);
  const message = {
    problem: problemToWire(request.problem),
    entropy: entropyToWire(request.entropy),
    alpha: request.alpha,
    result: resultToWire(request.result, false),
  };
  return new Promise((resolve, reject) => {
    client.Verify(message, callOptions(options), (error, reply) => {
      if (error) reject(remoteError(error));
      else resolve({ valid: reply!.valid, certifiedLowerBound: reply!.certifiedLowerBound ?? null, reason: reply!.reason });
    });
  });
}

/** Health status names of grpc.health.v1, plus SERVICE_UNKNOWN and UNREACHABLE for a failed check. */
export type HealthStatusName = 'UNKNOWN' | 'SERVING' | 'NOT_SERVING' | 'SERVICE_UNKNOWN' | 'UNREACHABLE';

/** A health answer; `reason` says why a server was unreachable. */
export interface HealthAnswer {
  status: HealthStatusName;
  reason?: string;
}

interface HealthClient extends grpc.Client {
  Check(
    request: { service: string },
    metadata: grpc.Metadata,
    options: grpc.CallOptions,
    callback: (error: grpc.ServiceError | null, reply?: { status: string }) => void,
  ): grpc.ClientUnaryCall;
}

type HealthConstructor = new (target: string, credentials: grpc.ChannelCredentials, options: grpc.ChannelOptions) => HealthClient;
let healthConstructor: HealthConstructor | undefined;

function healthClient(target: string): HealthClient {
  healthConstructor ??= (grpc.loadPackageDefinition(protoLoader.loadSync(healthProtoPath, PROTO_LOADER_OPTIONS)) as unknown as {
    grpc: { health: { v1: { Health: HealthConstructor } } };
  }).grpc.health.v1.Health;
  const { credentials, options } = channelSettings();
  return new healthConstructor(target, credentials, options);
}

/** Asks the standard health service of one server (or one replica behind a name); `service` '' means the whole server. */
export async function checkHealthOf(server: string, service = '', options: CallOptions = { deadlineMs: 3000 }): Promise<HealthAnswer> {
  const resolved = await resolveServers(parseServers(server));
  const client = healthClient(resolved.servers.target);
  return new Promise((resolve) => {
    client.Check({ service }, new grpc.Metadata({ waitForReady: options.waitForReady ?? false }), callOptions(options), (error, reply) => {
      client.close();
      if (!error) resolve({ status: (reply?.status ?? 'UNKNOWN') as HealthStatusName });
      else if (error.code === grpc.status.NOT_FOUND) resolve({ status: 'SERVICE_UNKNOWN' });
      else resolve({ status: 'UNREACHABLE', reason: error.details });
    });
  });
}

/** The status name alone (see checkHealthOf). */
export async function checkHealth(server: string, service = '', options: CallOptions = { deadlineMs: 3000 }): Promise<HealthStatusName> {
  return (await checkHealthOf(server, service, options)).status;
}

/** Interval between health checks while waiting for a server to come up. */
const HEALTH_POLL_MS = 200;

/**
 * Asks until the server says SERVING or `waitMs` has passed (a server still starting is unreachable or
 * NOT_SERVING for a moment); the last answer is returned.
 */
export async function waitForServing(server: string, service: string, waitMs: number, checkMs: number): Promise<HealthAnswer> {
  const end = Date.now() + waitMs;
  for (;;) {
    const remaining = end - Date.now();
    const answer = await checkHealthOf(server, service, { deadlineMs: Math.max(1, Math.min(checkMs, remaining)), waitForReady: remaining > 0 });
    if (answer.status === 'SERVING' || Date.now() + HEALTH_POLL_MS > end) return answer;
    await pause(HEALTH_POLL_MS);
  }
}
