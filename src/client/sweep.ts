// A parameter sweep on the client: read a grid file, expand it into points, spread the points over the replicas
// behind --server (or an embedded server) a bounded number at a time, retry a point whose replica fails on
// another one, and keep exactly one result per point.
import * as grpc from '@grpc/grpc-js';
import { pino } from 'pino';
import { DEFAULT_SETTINGS } from '../frank-wolfe/settings.js';
import { ValidationError } from '../problem/errors.js';
import { JsonMessage } from '../problem/json.js';
import { expandGrid, runBatch, type BatchPoint } from '../service/batch.js';
import type { EntropyKind } from '../service/generated/renyibound/v1/EntropyKind.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import type { ParameterGrid__Output } from '../service/generated/renyibound/v1/ParameterGrid.js';
import { prepareSolve, withoutProblem } from '../service/prepare.js';
import { RenyiBoundServer, type ServerOptions } from '../service/server.js';
import { entropyKindToWire } from '../service/wire.js';
import { checkHealthOf, closeClients, connect, solveRequestToWire, solveWire, type RemoteBatchItem } from './client.js';
import { isReplicaFailure, RemoteCallError, transportReason } from './errors.js';

/** How long the sweep waits for a first answer from any replica before saying none is reachable. */
const REACHABLE_CHECK_MS = 5000;

/** Throws UNAVAILABLE (naming the reason) when no replica behind `address` answers at all. */
async function ensureReachable(address: string): Promise<void> {
  const answer = await checkHealthOf(address, '', { deadlineMs: REACHABLE_CHECK_MS });
  if (answer.status === 'UNREACHABLE') throw new RemoteCallError(grpc.status.UNAVAILABLE, answer.reason ?? 'no answer', undefined);
}

const GRID_FIELDS = ['example', 'baseParameters', 'axes', 'entropies', 'settings'] as const;
const AXIS_FIELDS = ['name', 'values'] as const;
const SETTINGS_FIELDS = ['gapTolerance', 'maxIterations', 'timeLimitMs'] as const;

function numberMap(value: unknown, field: string): Record<string, number> {
  if (value === undefined) return {};
  if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new ValidationError(field, 'must be an object of numbers');
  const out: Record<string, number> = {};
  for (const [key, entry] of Object.entries(value)) {
    if (typeof entry !== 'number' || !Number.isFinite(entry)) throw new ValidationError(`${field}.${key}`, 'must be a finite number');
    out[key] = entry;
  }
  return out;
}

function entropyName(value: unknown, field: string): EntropyKind {
  if (typeof value !== 'string') throw new ValidationError(field, 'must be an entropy kind name');
  const wire = /^[A-Z_]+$/.test(value) ? value : entropyKindToWire(value);
  if (!['VON_NEUMANN', 'PETZ_UP', 'PETZ_DOWN', 'SANDWICHED_UP'].includes(wire)) {
    throw new ValidationError(field, `unknown entropy kind ${JSON.stringify(value)} (von-neumann, petz-up, petz-down, sandwiched-up)`);
  }
  return wire as EntropyKind;
}

/**
 * A grid file: renyibound.v1.ParameterGrid in protobuf JSON, for example
 * {"example": "bb84-entangled", "baseParameters": {"alpha": 1.5}, "axes": [{"name": "qber-x", "values": [0.01, 0.02]}],
 *  "entropies": ["von-neumann", "PETZ_UP"], "settings": {"gapTolerance": 1e-6}}.
 * Keys are checked here (the protobuf encoder would drop a misspelt one); values are checked by the server.
 */
export function gridFromJson(json: unknown): ParameterGrid {
  const message = JsonMessage.read(json, 'grid', GRID_FIELDS);
  const example = message.get('example');
  if (typeof example !== 'string' || example === '') throw new ValidationError('grid.example', 'must name an example builder');
  const axesJson = message.get('axes') ?? [];
  if (!Array.isArray(axesJson)) throw new ValidationError('grid.axes', 'must be an array');
  const axes = axesJson.map((axisJson, k) => {
    const axis = JsonMessage.read(axisJson, `grid.axes[${k}]`, AXIS_FIELDS);
    const name = axis.get('name');
    if (typeof name !== 'string') throw new ValidationError(`grid.axes[${k}].name`, 'must be a string');
    const values = axis.get('values');
    if (!Array.isArray(values)) throw new ValidationError(`grid.axes[${k}].values`, 'must be an array of numbers');
    values.forEach((v, j) => {
      if (typeof v !== 'number' || !Number.isFinite(v)) throw new ValidationError(`grid.axes[${k}].values[${j}]`, 'must be a finite number');
    });
    return { name, values: values as number[] };
  });
  const entropiesJson = message.get('entropies') ?? [];
  if (!Array.isArray(entropiesJson)) throw new ValidationError('grid.entropies', 'must be an array of entropy kinds');
  const settingsJson = message.get('settings');
  const settings = settingsJson === undefined ? undefined : JsonMessage.read(settingsJson, 'grid.settings', SETTINGS_FIELDS);
  return {
    example,
    baseParameters: numberMap(message.get('baseParameters'), 'grid.baseParameters'),
    axes,
    entropies: entropiesJson.map((e, i) => entropyName(e, `grid.entropies[${i}]`)),
    settings: settings && {
      gapTolerance: settings.number('gapTolerance'),
      maxIterations: settings.number('maxIterations'),
      timeLimitMs: settings.number('timeLimitMs'),
    },
  };
}

/** A slice of a grid: the points whose index is `index` modulo `count` (so every shard mixes kinds and axes). */
export interface Shard {
  index: number;
  count: number;
}

/** Parses `--shard i/N` (0 ≤ i < N). */
export function parseShard(text: string, field = '--shard'): Shard {
  const match = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  const index = match ? Number(match[1]) : NaN;
  const count = match ? Number(match[2]) : NaN;
  if (!match || count < 1 || index >= count) throw new ValidationError(field, `must be i/N with 0 ≤ i < N (got ${JSON.stringify(text)})`);
  return { index, count };
}

export function inShard(index: number, shard: Shard | undefined): boolean {
  return shard === undefined || index % shard.count === shard.index;
}

/** The grid with every field present, as the server decodes it (what expandGrid reads). */
export function gridAsDecoded(grid: ParameterGrid): ParameterGrid__Output {
  return {
    example: grid.example ?? '',
    baseParameters: Object.fromEntries(Object.entries(grid.baseParameters ?? {}).map(([key, value]) => [key, Number(value)])),
    axes: (grid.axes ?? []).map((axis) => ({ name: axis.name ?? '', values: (axis.values ?? []).map(Number) })),
    entropies: [...(grid.entropies ?? [])] as ParameterGrid__Output['entropies'],
    settings: grid.settings
      ? {
          gapTolerance: Number(grid.settings.gapTolerance ?? 0),
          maxIterations: Number(grid.settings.maxIterations ?? 0),
          timeLimitMs: Number(grid.settings.timeLimitMs ?? 0),
        }
      : null,
  };
}

/** The grid's points (checked as a whole first: an unknown example, axis or kind is one error, before any point). */
export function gridPoints(grid: ParameterGrid, shard?: Shard): BatchPoint[] {
  return expandGrid(gridAsDecoded(grid)).filter((point) => inShard(point.index, shard));
}

/** Points in flight per replica by default (a replica with a few threads stays busy; its queue stays short). */
export const DEFAULT_IN_FLIGHT_PER_REPLICA = 4;
/** Attempts per point before its replicas count as lost (100 ms doubling to 2 s between them: about 7 s). */
export const DEFAULT_POINT_ATTEMPTS = 8;
/** A point's call gets its time limit plus this long before the client gives up on that replica. */
const DEADLINE_SLACK_MS = 60_000;

export interface SweepOptions {
  /** --server: host:port, a comma-separated list, or a DNS name; when absent an embedded server is started. */
  server?: string;
  /** Options of the embedded server (threads, cache directory, Redis, logger; default: silent, loopback, port 0). */
  embedded?: Pick<ServerOptions, 'workers' | 'cacheDirectory' | 'redisUrl' | 'redisRequired' | 'logger'>;
  warmStarts?: boolean;
  requestId?: string;
  /** Only this slice of the grid. */
  shard?: Shard;
  /** Only these point indices (assembling: the points missing from the cache). */
  only?: ReadonlySet<number>;
  /** Points in flight per replica. */
  inFlightPerReplica?: number;
  /** Attempts per point when its replica fails. */
  attempts?: number;
  /** Deadline of one attempt; default: the grid's time limit plus a minute. */
  pointDeadlineMs?: number;
  /** Called for every finished point, in completion order. */
  onItem?: (item: RemoteBatchItem) => void;
  /** Called when a point is sent again because its replica failed. */
  onRetry?: (index: number, error: Error) => void;
}

export interface SweepOutcome {
  /** One item per finished point, in completion order. */
  items: RemoteBatchItem[];
  seconds: number;
  /** Where the sweep ran (the --server text, or the embedded server's address). */
  address: string;
  embedded: boolean;
  /** Replicas found behind the address. */
  replicas: number;
  /** Attempts that failed on a replica and were sent again. */
  retries: number;
  /** Set when no replica answered any more: the reason, and how many points were left unfinished. */
  lost?: { reason: string; unfinished: number };
}

/**
 * Runs a grid point by point over the replicas behind `options.server`. Each warm-start group is walked in grid
 * order and each point starts from its nearest solved neighbour (see runBatch). A point whose replica fails is
 * sent again (round robin picks the next ready replica); a bad point is reported in its item; when every replica
 * stays unreachable for a whole retry budget the sweep stops and says so in `lost`, keeping what was finished.
 */
export async function runSweep(grid: ParameterGrid, options: SweepOptions = {}): Promise<SweepOutcome> {
  const points = gridPoints(grid, options.shard).filter((point) => options.only === undefined || options.only.has(point.index));
  const embedded =
    options.server === undefined
      ? await RenyiBoundServer.start({ port: 0, logger: pino({ level: 'silent' }), ...options.embedded })
      : undefined;
  const address = options.server ?? embedded!.address;
  const started = performance.now();
  const items = new Map<number, RemoteBatchItem>();
  const arrival: RemoteBatchItem[] = [];
  const stop = new AbortController();
  let retries = 0;
  let lost: SweepOutcome['lost'];
  let replicas = 1;
  const timeLimitMs = Number(grid.settings?.timeLimitMs ?? 0) || DEFAULT_SETTINGS.timeLimitMs;
  const deadlineMs = options.pointDeadlineMs ?? timeLimitMs + DEADLINE_SLACK_MS;
  try {
    replicas = (await connect(address)).replicas;
    await ensureReachable(address);
    await runBatch(points, {
      // Validation and hashing run here, once per point; the server checks again (it trusts no client).
      prepare: async (input) => withoutProblem(prepareSolve(input)),
      solve: (prepared) => {
        const message = solveRequestToWire(
          {
            problem: prepared.problemJson,
            entropy: prepared.request.kind,
            alpha: prepared.request.alpha,
            settings: prepared.settings,
            warmStart: prepared.warmStart,
            requestId: options.requestId,
          },
          false,
        );
        return solveWire(address, message, { deadlineMs, attempts: options.attempts ?? DEFAULT_POINT_ATTEMPTS, signal: stop.signal }, () => retries++).catch(
          (error: unknown) => {
            if (isReplicaFailure(error) && !stop.signal.aborted) {
              lost = { reason: transportReason(error as RemoteCallError), unfinished: 0 };
              stop.abort();
            }
            throw error;
          },
        );
      },
      concurrency: Math.max(1, (options.inFlightPerReplica ?? DEFAULT_IN_FLIGHT_PER_REPLICA) * replicas),
      warmStarts: options.warmStarts !== false,
      signal: stop.signal,
      onPoint: (point, outcome) => {
        // A point cut short because the replicas were lost is unfinished, not failed.
        if (stop.signal.aborted && outcome.result === undefined && outcome.error?.field === '') return;
        if (items.has(point.index)) throw new Error(`point ${point.index} finished twice`);
        const item: RemoteBatchItem = {
          index: point.index,
          point: point.point,
          entropy: point.entropy,
          done: items.size + 1,
          total: points.length,
        };
        if (outcome.result) item.result = outcome.result;
        if (outcome.error) item.error = outcome.error;
        items.set(point.index, item);
        arrival.push(item);
        options.onItem?.(item);
      },
    });
  } finally {
    closeClients();
    await embedded?.shutdown();
  }
  if (lost) lost.unfinished = points.length - items.size;
  return { items: arrival, seconds: (performance.now() - started) / 1000, address, embedded: embedded !== undefined, replicas, retries, lost };
}
