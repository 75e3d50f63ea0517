// The gRPC server: RenyiBound handlers, health, reflection, the solver pool, the cache, and graceful shutdown.
import * as grpc from '@grpc/grpc-js';
import { ReflectionService } from '@grpc/reflection';
import * as protoLoader from '@grpc/proto-loader';
import { HealthImplementation, protoPath as healthProtoPath, type ServingStatus } from 'grpc-health-check';
import { PROTO_LOADER_OPTIONS } from '../problem/proto-options.js';
import { pino, type Logger } from 'pino';
import { MemoryCacheLayer, DEFAULT_MEMORY_ENTRIES } from '../cache/memory.js';
import type { CacheLayer } from '../cache/layer.js';
import { RedisCacheLayer } from '../cache/redis.js';
import { ResultCache } from '../cache/result-cache.js';
import { defaultCacheDirectory, SqliteCacheLayer, type SqliteOpenEvent } from '../cache/sqlite.js';
import { verifyInfeasibility, verifyResult } from '../certificate/verify.js';
import { ValidationError } from '../problem/errors.js';
import { expandGrid, expandRequestList, runBatch, solveInputFromWire, type BatchPoint } from './batch.js';
import { decoyRateHandler } from './decoy-rate.js';
import { verifyDecoyRateHandler } from './decoy-rate-verify.js';
import { toServiceError } from './errors.js';
import { guardRequests, malformedReason, receivedAt } from './guarded-service.js';
import { DEFAULT_MAX_MESSAGE_BYTES, TRANSPORT_CAP_FACTOR } from './message-size.js';
import type { BatchItem } from './generated/renyibound/v1/BatchItem.js';
import type { BatchRequest__Output } from './generated/renyibound/v1/BatchRequest.js';
import type { RenyiBoundHandlers } from './generated/renyibound/v1/RenyiBound.js';
import type { SolveReply } from './generated/renyibound/v1/SolveReply.js';
import type { SolveRequest__Output } from './generated/renyibound/v1/SolveRequest.js';
import type { VerifyReply } from './generated/renyibound/v1/VerifyReply.js';
import type { VerifyRequest__Output } from './generated/renyibound/v1/VerifyRequest.js';
import { listExamples } from './list-examples.js';
import { PreparedRequestMemo, prepareSolve, validationCheckpoint } from './prepare.js';
import { loadServiceDefinition, loadServicePackage, SERVICE_NAME } from './proto.js';
import { SolveCoordinator } from './solve-coordinator.js';
import type { WorkerReply, WorkerTask } from './solve-worker.js';
import { QueueFullError, SolverPool } from './solver-pool.js';
import { checkExposure, exposureWarning, serveHealthOnly, serverCredentials, serverOptions, type ServerSecurity } from './security.js';
import { entropyKindFromWire, resultFromWire, resultToWire, settingsFromWire, wireToJson } from './wire.js';
import { handleKeyLength, handleKeyLengthStream } from './key-length.js';

export interface ServerOptions {
  /** Interface to bind; loopback unless told otherwise. */
  host?: string;
  /** TCP port; 0 picks a free one (see RenyiBoundServer.port). */
  port?: number;
  /** Solver threads; defaults to the number of cores. */
  workers?: number;
  /** Tasks allowed to wait for a thread; beyond it Solve answers RESOURCE_EXHAUSTED. */
  queueLimit?: number;
  /** Directory of the SQLite cache; false keeps results in memory only. */
  cacheDirectory?: string | false;
  /** Redis shared between replicas. */
  redisUrl?: string;
  /** Refuse to start while Redis cannot be reached (default: start with the local tiers and join Redis later). */
  redisRequired?: boolean;
  /** Largest request accepted; larger ones get INVALID_ARGUMENT naming the limit (default: DEFAULT_MAX_MESSAGE_BYTES). */
  maxMessageBytes?: number;
  /** Results kept in the in-memory tier. */
  memoryEntries?: number;
  logger?: Logger;
  /** How long shutdown waits for in-flight calls before cancelling them. */
  drainTimeoutMs?: number;
  /** Attempts per task when its solver thread dies (default 2: one retry). */
  workerAttempts?: number;
  /** TLS, bearer token, and whether a plaintext non-loopback bind is allowed (see security.ts). */
  security?: ServerSecurity;
  /** A second, plaintext port serving only grpc.health.v1 (for probes that cannot speak TLS). */
  healthPort?: number;
}

/** Defaults of the command line (`renyi-bound serve`). */
export const DEFAULT_HOST = '127.0.0.1';
export const DEFAULT_PORT = 50051;
/** Long enough for a typical solve to finish; after it the remaining solves are cancelled (they still answer). */
export const DEFAULT_DRAIN_TIMEOUT_MS = 60_000;
/** Abort reason of calls cut short by the drain timeout (client cancels and deadlines abort without one). */
const SHUTDOWN_ABORT_REASON = 'server shutting down';
/** After cancelling what is left, connections are closed if calls still have not finished by then. */
const FORCE_SHUTDOWN_AFTER_CANCEL_MS = 15_000;

/** A call's deadline in epoch milliseconds (Infinity when the client set none). */
function deadlineOf(call: grpc.ServerUnaryCall<unknown, unknown> | grpc.ServerWritableStream<unknown, unknown>): number {
  const deadline = call.getDeadline();
  return deadline instanceof Date ? deadline.getTime() : deadline;
}

function bindAddress(host: string, port: number): string {
  return host.includes(':') && !host.startsWith('[') ? `[${host}]:${port}` : `${host}:${port}`;
}

/**
 * Every handler first refuses a request the guard could not decode (garbage bytes, over the size limit) with
 * INVALID_ARGUMENT, so that no handler ever sees it.
 */
function refuseMalformed<H extends object>(handlers: H): H {
  const guarded: Record<string, unknown> = {};
  for (const [name, handler] of Object.entries(handlers) as [string, (call: grpc.ServerUnaryCall<unknown, unknown>, callback?: grpc.sendUnaryData<unknown>) => void][]) {
    guarded[name] = (call: grpc.ServerUnaryCall<unknown, unknown>, callback?: grpc.sendUnaryData<unknown>) => {
      const reason = malformedReason(call.request);
      if (reason === undefined) return handler(call, callback);
      const status = toServiceError(new ValidationError('request', reason));
      if (callback) callback(status);
      else call.emit('error', status);
    };
  }
  return guarded as H;
}

export class RenyiBoundServer {
  readonly health: HealthImplementation;
  /** Validated, hashed requests by fingerprint: a repeated request skips validation and hashing. */
  private readonly preparedRequests = new PreparedRequestMemo();
  private readonly batchControllers = new Set<AbortController>();
  private readonly callControllers = new Set<AbortController>();
  private shuttingDown: Promise<void> | undefined;
  private servingStatus: ServingStatus = 'SERVING';
  /** The plaintext health-only listener and its port, when one was asked for. */
  healthListener: { server: grpc.Server; port: number } | undefined;

  private constructor(
    readonly grpcServer: grpc.Server,
    readonly pool: SolverPool<WorkerTask, WorkerReply>,
    readonly cache: ResultCache,
    readonly coordinator: SolveCoordinator,
    readonly logger: Logger,
    readonly host: string,
    readonly port: number,
    private readonly drainTimeoutMs: number,
  ) {
    this.health = new HealthImplementation({ '': 'SERVING', [SERVICE_NAME]: 'SERVING' });
  }

  /** host:port for clients. */
  get address(): string {
    return bindAddress(this.host === '0.0.0.0' ? '127.0.0.1' : this.host === '::' ? '::1' : this.host, this.port);
  }

  get status(): ServingStatus {
    return this.servingStatus;
  }

  static async start(options: ServerOptions = {}): Promise<RenyiBoundServer> {
    const logger = options.logger ?? pino({ name: 'renyi-bound' });
    const security = options.security ?? {};
    checkExposure(options.host ?? DEFAULT_HOST, security);
    const warning = exposureWarning(options.host ?? DEFAULT_HOST, security);
    if (warning !== undefined) logger.warn({ event: 'security' }, warning);
    const layers: CacheLayer[] = [new MemoryCacheLayer(options.memoryEntries ?? DEFAULT_MEMORY_ENTRIES)];
    if (options.cacheDirectory !== false) {
      layers.push(SqliteCacheLayer.inDirectory(options.cacheDirectory ?? defaultCacheDirectory(), (event: SqliteOpenEvent) => {
        if (event.kind === 'created') logger.info({ event: 'cache-file', path: event.path }, 'created the result cache file');
        else logger.warn({ event: 'cache-file', ...event }, 'the result cache file was damaged: moved aside and rebuilt empty');
      }));
    }
    if (options.redisUrl) {
      layers.push(
        await RedisCacheLayer.connect(options.redisUrl, {
          required: options.redisRequired,
          onEvent: (event) => {
            if (event.kind === 'available') logger.info({ event: 'redis', ...event }, 'redis reachable: the shared cache is in use');
            else logger.warn({ event: 'redis', ...event }, 'redis unreachable: going on with the local cache tiers');
          },
        }),
      );
    }
    const cache = new ResultCache(layers, (event) => logger.warn({ event: 'cache', ...event }, `cache entry ${event.kind}`));
    const pool = new SolverPool<WorkerTask, WorkerReply>({
      workers: options.workers,
      queueLimit: options.queueLimit,
      maxAttempts: options.workerAttempts,
    });
    const coordinator = new SolveCoordinator(pool, cache, logger);
    const maxMessageBytes = options.maxMessageBytes ?? DEFAULT_MAX_MESSAGE_BYTES;
    // Up to the cap the transport reads a message, and guardRequests refuses one above the limit by name.
    const grpcServer = new grpc.Server({
      ...serverOptions(security),
      'grpc.max_receive_message_length': maxMessageBytes * TRANSPORT_CAP_FACTOR,
      'grpc.max_send_message_length': maxMessageBytes * TRANSPORT_CAP_FACTOR,
    });
    const host = options.host ?? DEFAULT_HOST;
    let port: number;
    try {
      port = await new Promise<number>((resolve, reject) =>
        grpcServer.bindAsync(bindAddress(host, options.port ?? DEFAULT_PORT), serverCredentials(security.tls), (error, bound) =>
          error ? reject(error) : resolve(bound),
        ),
      );
    } catch (error) {
      await pool.destroy();
      await cache.close();
      throw error;
    }
    const server = new RenyiBoundServer(grpcServer, pool, cache, coordinator, logger, host, port, options.drainTimeoutMs ?? DEFAULT_DRAIN_TIMEOUT_MS);
    grpcServer.addService(guardRequests(loadServicePackage().renyibound.v1.RenyiBound.service, maxMessageBytes), server.handlers());
    server.health.addToServer(grpcServer);
    // Reflection lists the health service too, so tools like grpcurl can discover both.
    new ReflectionService({ ...loadServiceDefinition(), ...protoLoader.loadSync(healthProtoPath, PROTO_LOADER_OPTIONS) }).addToServer(grpcServer);
    if (options.healthPort !== undefined) {
      server.healthListener = await serveHealthOnly(server.health, bindAddress(host, options.healthPort)).catch(async (error: unknown) => {
        await server.shutdown();
        throw error;
      });
    }
    logger.info(
      { event: 'listening', address: server.address, tls: security.tls ? (security.tls.clientCa ? 'mutual' : 'server') : 'off', tokens: security.tokens?.length ?? 0, workers: pool.workers, queueLimit: pool.queueLimit, cache: layers.map((l) => l.name) },
      'renyi-bound service listening',
    );
    return server;
  }

  private setServing(status: ServingStatus): void {
    this.servingStatus = status;
    this.health.setStatus('', status);
    this.health.setStatus(SERVICE_NAME, status);
  }

  /** An abort controller tied to the call's cancellation and deadline. */
  private controllerFor(call: grpc.ServerUnaryCall<unknown, unknown> | grpc.ServerWritableStream<unknown, unknown>, registry: Set<AbortController>): { controller: AbortController; release: () => void } {
    const controller = new AbortController();
    const abort = () => controller.abort();
    call.on('cancelled', abort);
    const milliseconds = deadlineOf(call) - Date.now();
    const timer = Number.isFinite(milliseconds) ? setTimeout(abort, Math.max(0, milliseconds)) : undefined;
    registry.add(controller);
    return {
      controller,
      release: () => {
        clearTimeout(timer);
        call.removeListener('cancelled', abort);
        registry.delete(controller);
      },
    };
  }

  private handlers(): RenyiBoundHandlers {
    const handlers: RenyiBoundHandlers = {
      Solve: (call, callback) => void this.solve(call, callback),
      SolveBatch: (call) => void this.solveBatch(call),
      Verify: (call, callback) => this.verify(call, callback),
      ListExamples: listExamples,
      KeyLength: (call, callback) => void handleKeyLength(call, callback, this.coordinator),
      KeyLengthStream: (call) => void handleKeyLengthStream(call, this.coordinator),
      DecoyRate: decoyRateHandler(),
      VerifyDecoyRate: verifyDecoyRateHandler,
    };
    return refuseMalformed(handlers);
  }

  private async solve(
    call: grpc.ServerUnaryCall<SolveRequest__Output, SolveReply>,
    callback: grpc.sendUnaryData<SolveReply>,
  ): Promise<void> {
    // The time limit counts from the start of decoding; validation polls it and the client's deadline.
    const acceptedAt = receivedAt(call.request) ?? Date.now();
    let prepared;
    try {
      const checkpoint = validationCheckpoint(acceptedAt, settingsFromWire(call.request.settings), deadlineOf(call));
      prepared = { ...this.preparedRequests.prepare(call.request, () => prepareSolve(solveInputFromWire(call.request), checkpoint)), acceptedAt };
    } catch (error) {
      callback(toServiceError(error));
      return;
    }
    const { controller, release } = this.controllerFor(call, this.callControllers);
    try {
      const result = await this.coordinator.solve(prepared, { signal: controller.signal, requestId: call.request.requestId });
      callback(null, { result: resultToWire(result, result.fromCache), requestId: call.request.requestId });
    } catch (error) {
      callback(toServiceError(error));
    } finally {
      release();
    }
  }

  private async solveBatch(call: grpc.ServerWritableStream<BatchRequest__Output, BatchItem>): Promise<void> {
    let points: BatchPoint[];
    try {
      const request = call.request;
      if (request.source === 'grid' && request.grid) points = expandGrid(request.grid);
      else if (request.source === 'requests' && request.requests) points = expandRequestList(request.requests);
      else throw new ValidationError('source', 'must hold either requests or grid');
      if (this.pool.isFull) throw new QueueFullError(this.pool.queueLimit);
    } catch (error) {
      call.emit('error', toServiceError(error));
      return;
    }
    const { controller, release } = this.controllerFor(call, this.batchControllers);
    const total = points.length;
    let done = 0;
    this.logger.info({ event: 'batch', requestId: call.request.requestId || undefined, points: total }, 'batch started');
    try {
      await runBatch(points, {
        prepare: (input) => this.coordinator.prepare(input),
        solve: (prepared) =>
          this.coordinator.solve(prepared, { signal: controller.signal, requestId: call.request.requestId, admitted: true }),
        concurrency: this.pool.workers,
        warmStarts: !call.request.disableWarmStart,
        onWarmStartsDropped: (group, warmIterations, coldIterations) =>
          this.logger.info({ event: 'warm-start', group, warmIterations, coldIterations }, 'warm starts dropped for this group: slower than cold'),
        signal: controller.signal,
        onPoint: (point, outcome) => {
          done++;
          if (controller.signal.aborted) return;
          call.write({
            index: point.index,
            point: point.point,
            entropy: point.entropy === '' ? 'ENTROPY_KIND_UNSPECIFIED' : (point.entropy as BatchItem['entropy']),
            result: outcome.result ? resultToWire(outcome.result, outcome.result.fromCache) : null,
            errorField: outcome.error?.field ?? '',
            errorMessage: outcome.error?.message ?? '',
            progress: { done, total },
          });
        },
      });
      if (!controller.signal.aborted) call.end();
      else if (controller.signal.reason === SHUTDOWN_ABORT_REASON) {
        // Aborted by the server (drain timeout), not by the client: say so instead of leaving the stream open.
        call.emit('error', { code: grpc.status.UNAVAILABLE, details: `the server is shutting down; ${done} of ${total} points were sent` });
      }
    } catch (error) {
      call.emit('error', toServiceError(error));
    } finally {
      this.logger.info({ event: 'batch', requestId: call.request.requestId || undefined, points: total, done, cancelled: controller.signal.aborted }, 'batch finished');
      release();
    }
  }

  private verify(call: grpc.ServerUnaryCall<VerifyRequest__Output, VerifyReply>, callback: grpc.sendUnaryData<VerifyReply>): void {
    try {
      const request = call.request;
      const prepared = prepareSolve({
        problemJson: request.problem === null ? undefined : wireToJson(request.problem),
        entropy: entropyKindFromWire(request.entropy),
        alpha: request.alpha,
      });
      if (request.result === null) throw new ValidationError('result', 'is required');
      const result = resultFromWire(request.result);
      // An INFEASIBLE result carries a Farkas certificate instead of a bound.
      const report =
        result.status === 'INFEASIBLE' && result.infeasibility
          ? verifyInfeasibility(prepared.problem, result.infeasibility)
          : verifyResult(prepared.problem, prepared.request, result);
      callback(null, { valid: report.valid, certifiedLowerBound: report.certifiedLowerBound ?? undefined, reason: report.reason });
    } catch (error) {
      callback(toServiceError(error));
    }
  }

  /**
   * Graceful shutdown: health goes NOT_SERVING, new calls are refused, in-flight calls finish (after
   * drainTimeoutMs they are cancelled, which still answers them with a valid bound), then threads and caches close.
   */
  shutdown(): Promise<void> {
    this.shuttingDown ??= (async () => {
      this.setServing('NOT_SERVING');
      this.logger.info({ event: 'shutdown', inFlight: this.pool.pending }, 'draining');
      const drained = new Promise<void>((resolve) => this.grpcServer.tryShutdown(() => resolve()));
      let timer: NodeJS.Timeout | undefined;
      const timedOut = new Promise<'timeout'>((resolve) => {
        timer = setTimeout(() => resolve('timeout'), this.drainTimeoutMs);
      });
      if ((await Promise.race([drained, timedOut])) === 'timeout') {
        this.logger.warn({ event: 'shutdown', inFlight: this.pool.pending }, 'drain timeout: cancelling in-flight solves');
        for (const controller of [...this.callControllers, ...this.batchControllers]) controller.abort(SHUTDOWN_ABORT_REASON);
        // Cancelled solves stop within an iteration; if something still hangs, close the connections.
        const forced = setTimeout(() => this.grpcServer.forceShutdown(), FORCE_SHUTDOWN_AFTER_CANCEL_MS);
        await drained;
        clearTimeout(forced);
      }
      clearTimeout(timer);
      this.healthListener?.server.forceShutdown();
      await this.pool.destroy();
      await this.cache.close();
      this.logger.info({ event: 'shutdown' }, 'stopped');
    })();
    return this.shuttingDown;
  }
}
