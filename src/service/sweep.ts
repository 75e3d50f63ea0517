// A parameter sweep: read a grid file, run it on a server (or an embedded one), collect the streamed items.
import * as grpc from '@grpc/grpc-js';
import { pino, type Logger } from 'pino';
import { ValidationError } from '../problem/errors.js';
import { entropyKindFrom } from '../problem/entropy-request.js';
import { JsonMessage } from '../problem/json.js';
import { closeClients, RemoteCallError, solveBatchRemote, type RemoteBatchItem } from './client.js';
import type { EntropyKind } from './generated/renyibound/v1/EntropyKind.js';
import type { ParameterGrid } from './generated/renyibound/v1/ParameterGrid.js';
import { RenyiBoundServer } from './server.js';
import { entropyKindToWire } from './wire.js';

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
  return entropyKindToWire(entropyKindFrom(value, field)) as EntropyKind;
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

export interface SweepOptions {
  /** host:port of a running server; when absent an embedded server is started on a loopback port. */
  server?: string;
  /** Threads of the embedded server (default: the cores). */
  workers?: number;
  /** SQLite directory of the embedded server (default: the user cache directory); false for memory only. */
  cacheDirectory?: string | false;
  /** Log destination of the embedded server (default: silent). */
  logger?: Logger;
  warmStarts?: boolean;
  requestId?: string;
  /** Called for every streamed item, in arrival order. */
  onItem?: (item: RemoteBatchItem) => void;
}

export interface SweepOutcome {
  items: RemoteBatchItem[];
  seconds: number;
  /** Where the sweep ran. */
  address: string;
  embedded: boolean;
}

/** Runs a grid; a grid-level INVALID_ARGUMENT from the server comes back as a ValidationError. */
export async function runSweep(grid: ParameterGrid, options: SweepOptions = {}): Promise<SweepOutcome> {
  const embedded = options.server === undefined
    ? await RenyiBoundServer.start({
        port: 0,
        workers: options.workers,
        cacheDirectory: options.cacheDirectory,
        logger: options.logger ?? pino({ level: 'silent' }),
      })
    : undefined;
  const address = options.server ?? embedded!.address;
  const started = performance.now();
  const items: RemoteBatchItem[] = [];
  try {
    const batch = solveBatchRemote(address, { grid, disableWarmStart: options.warmStarts === false, requestId: options.requestId ?? '' });
    for await (const item of batch.items) {
      items.push(item);
      options.onItem?.(item);
    }
  } catch (error) {
    if (error instanceof RemoteCallError && error.code === grpc.status.INVALID_ARGUMENT && error.field !== undefined) {
      throw new ValidationError(error.field, error.details.replace(`${error.field}: `, ''));
    }
    throw error;
  } finally {
    closeClients();
    await embedded?.shutdown();
  }
  return { items, seconds: (performance.now() - started) / 1000, address, embedded: embedded !== undefined };
}
