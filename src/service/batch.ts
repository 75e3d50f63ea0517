// Batches: expanding a request list or a parameter grid into points, and running them with warm starts
// taken from the nearest point already solved.
import { ValidationError } from '../problem/errors.js';
import type { MatrixJson } from '../result/types.js';
import { ENTROPY_ENUM_NAMES, entropyRequestFrom } from '../problem/entropy-request.js';
import { buildExample, EXAMPLES } from '../protocols/index.js';
import type { ParameterGrid__Output } from './generated/renyibound/v1/ParameterGrid.js';
import type { SolveRequest__Output } from './generated/renyibound/v1/SolveRequest.js';
import type { SolveRequestList__Output } from './generated/renyibound/v1/SolveRequestList.js';
import { checkSettings, type PreparedSolve, type SolveInput, underField } from './prepare.js';
import { entropyKindFromWire, settingsFromWire, wireToJson, type DeliveredResult } from './wire.js';

/** The grid's pseudo-parameter for the Rényi order. */
export const ALPHA_PARAMETER = 'alpha';
/** Largest number of points one batch may hold (a guard against a typo'd grid, not a performance limit). */
export const MAX_BATCH_POINTS = 100_000;

/** One point of a batch: a request to prepare and solve (`input`), or one already known to be bad (`error`). */
export interface BatchPoint {
  index: number;
  /** Swept parameter values, plus "alpha" for Rényi kinds. */
  point: Record<string, number>;
  /** Proto enum name of the entropy kind ('' while unknown). */
  entropy: string;
  input?: SolveInput;
  error?: { field: string; message: string };
  /** Points share warm starts only within a group: same kind, order and dimensions. */
  group: string;
  /** Position on the grid, each axis scaled to [0, 1], for "nearest solved point". */
  coordinates: number[];
  /** Where a preparation error's field path sits in the batch request. */
  placeError: (error: ValidationError) => { field: string; message: string };
}

/** A wire SolveRequest as a domain-level solve input. */
export function solveInputFromWire(request: SolveRequest__Output): SolveInput {
  return {
    problemJson: request.problem === null ? undefined : wireToJson(request.problem),
    entropy: entropyKindFromWire(request.entropy),
    alpha: request.alpha,
    settings: settingsFromWire(request.settings),
    warmStart: request.warmStart === null ? undefined : wireToJson(request.warmStart),
  };
}

/** The warm-start group of a grid point: kind, order and the dimensions the builder produced. */
function groupOf(kind: string, alpha: number | undefined, problemJson: unknown): string {
  const problem = (problemJson ?? {}) as Record<string, unknown>;
  return `${kind}|${alpha ?? ''}|${String(problem.dimensionA)}x${String(problem.dimensionB)}`;
}

function failure(error: unknown): { field: string; message: string } {
  if (error instanceof ValidationError) return { field: error.field, message: error.reason };
  throw error;
}

export function expandRequestList(list: SolveRequestList__Output): BatchPoint[] {
  if (list.requests.length > MAX_BATCH_POINTS) {
    throw new ValidationError('requests.requests', `holds ${list.requests.length} requests; at most ${MAX_BATCH_POINTS}`);
  }
  return list.requests.map((request, index) => {
    const input = solveInputFromWire(request);
    const prefix = `requests.requests[${index}]`;
    return {
      index,
      point: {},
      entropy: request.entropy === 'ENTROPY_KIND_UNSPECIFIED' ? '' : request.entropy,
      input,
      // Requests of a list are unrelated problems: each is its own group, so none warm-starts another.
      group: `request ${index}`,
      coordinates: [],
      placeError: (error) => ({ field: `${prefix}.${error.field}`, message: error.reason }),
    };
  });
}

function kebabCase(name: string): string {
  return name.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);
}

/** Checks the grid as a whole; a defect here refuses the batch (INVALID_ARGUMENT) rather than a point. */
function checkGrid(grid: ParameterGrid__Output): void {
  if (!Object.hasOwn(EXAMPLES, grid.example)) {
    throw new ValidationError('grid.example', `unknown example ${JSON.stringify(grid.example)} (expected one of ${Object.keys(EXAMPLES).join(', ')})`);
  }
  if (grid.entropies.length === 0) throw new ValidationError('grid.entropies', 'must name at least one entropy kind');
  grid.entropies.forEach((kind, i) => {
    if (entropyKindFromWire(kind) === undefined) throw new ValidationError(`grid.entropies[${i}]`, 'must be a specified entropy kind');
  });
  // Parameter names are checked once, here: a misspelt axis would otherwise fail every point on its own.
  const known = EXAMPLES[grid.example].parameters.map((p) => p.name);
  const expected = `expected ${[...known, ALPHA_PARAMETER].join(', ')}`;
  const seen = new Set<string>();
  grid.axes.forEach((axis, k) => {
    if (axis.name === '') throw new ValidationError(`grid.axes[${k}].name`, 'must name a parameter or "alpha"');
    const name = kebabCase(axis.name);
    if (name !== ALPHA_PARAMETER && !known.includes(name)) {
      throw new ValidationError(`grid.axes[${k}].name`, `${JSON.stringify(axis.name)} is not a parameter of ${grid.example} (${expected})`);
    }
    if (seen.has(name)) throw new ValidationError(`grid.axes[${k}].name`, `sweeps ${axis.name} twice`);
    seen.add(name);
    if (axis.values.length === 0) throw new ValidationError(`grid.axes[${k}].values`, 'must hold at least one value');
    axis.values.forEach((v, j) => {
      if (!Number.isFinite(v)) throw new ValidationError(`grid.axes[${k}].values[${j}]`, `must be finite (got ${v})`);
    });
  });
  for (const [key, value] of Object.entries(grid.baseParameters)) {
    if (key !== ALPHA_PARAMETER && !known.includes(kebabCase(key))) {
      throw new ValidationError(`grid.baseParameters.${key}`, `is not a parameter of ${grid.example} (${expected})`);
    }
    if (!Number.isFinite(value)) throw new ValidationError(`grid.baseParameters.${key}`, `must be finite (got ${value})`);
  }
  try {
    checkSettings(settingsFromWire(grid.settings));
  } catch (error) {
    underField('grid', error);
  }
}

/**
 * The grid's points: for each entropy kind (in order), the Cartesian product of the axes (first axis slowest).
 * The "alpha" axis applies to Rényi kinds only; von Neumann points appear once per remaining combination.
 */
export function expandGrid(grid: ParameterGrid__Output): BatchPoint[] {
  checkGrid(grid);
  const settings = settingsFromWire(grid.settings);
  const alphaAxis = grid.axes.findIndex((axis) => axis.name === ALPHA_PARAMETER);
  const baseAlpha = grid.baseParameters[ALPHA_PARAMETER];
  const builderBase: Record<string, number> = {};
  for (const [key, value] of Object.entries(grid.baseParameters)) if (key !== ALPHA_PARAMETER) builderBase[key] = value;

  const count = (axes: number[]) => axes.reduce((n, k) => n * grid.axes[k].values.length, 1);
  const allAxes = grid.axes.map((_, k) => k);
  const withoutAlpha = allAxes.filter((k) => k !== alphaAxis);
  const total = grid.entropies.reduce((n, kind) => n + count(kind === 'VON_NEUMANN' ? withoutAlpha : allAxes), 0);
  if (total > MAX_BATCH_POINTS) throw new ValidationError('grid.axes', `spans ${total} points; at most ${MAX_BATCH_POINTS}`);

  const spans = grid.axes.map((axis) => {
    const low = Math.min(...axis.values);
    const high = Math.max(...axis.values);
    return { low, width: high > low ? high - low : 1 };
  });

  const points: BatchPoint[] = [];
  for (const kind of grid.entropies) {
    const axes = kind === 'VON_NEUMANN' ? withoutAlpha : allAxes;
    const positions = new Array<number>(axes.length).fill(0);
    for (let n = 0; n < count(axes); n++) {
      // Mixed-radix counter over the axes, last axis fastest.
      let rest = n;
      for (let a = axes.length - 1; a >= 0; a--) {
        const size = grid.axes[axes[a]].values.length;
        positions[a] = rest % size;
        rest = Math.floor(rest / size);
      }
      points.push(gridPoint(grid, points.length, kind, axes, positions, spans, builderBase, baseAlpha, settings));
    }
  }
  return points;
}

function gridPoint(
  grid: ParameterGrid__Output,
  index: number,
  kind: string,
  axes: number[],
  positions: number[],
  spans: { low: number; width: number }[],
  builderBase: Record<string, number>,
  baseAlpha: number | undefined,
  settings: ReturnType<typeof settingsFromWire>,
): BatchPoint {
  const parameters = { ...builderBase };
  const point: Record<string, number> = {};
  const coordinates: number[] = [];
  let alpha = kind === 'VON_NEUMANN' ? undefined : baseAlpha;
  let alphaField = `grid.baseParameters.${ALPHA_PARAMETER}`;
  const fieldOfParameter = new Map<string, string>();
  axes.forEach((k, a) => {
    const axis = grid.axes[k];
    const value = axis.values[positions[a]];
    point[axis.name] = value;
    coordinates.push((value - spans[k].low) / spans[k].width);
    const field = `grid.axes[${k}].values[${positions[a]}]`;
    if (axis.name === ALPHA_PARAMETER) {
      alpha = value;
      alphaField = field;
    } else {
      parameters[axis.name] = value;
      fieldOfParameter.set(kebabCase(axis.name), field);
    }
  });
  if (alpha !== undefined && kind !== 'VON_NEUMANN') point[ALPHA_PARAMETER] = alpha;
  const placeError = (error: ValidationError) =>
    error.field === ALPHA_PARAMETER
      ? { field: alphaField, message: error.reason }
      : { field: `grid.${error.field}`, message: error.reason };
  const batchPoint: BatchPoint = { index, point, entropy: kind, group: '', coordinates, placeError };
  try {
    let problemJson: unknown;
    try {
      problemJson = buildExample(grid.example, parameters);
    } catch (error) {
      if (error instanceof ValidationError) {
        const field = fieldOfParameter.get(kebabCase(error.field)) ?? `grid.baseParameters.${error.field}`;
        throw new ValidationError(field, error.reason);
      }
      throw error;
    }
    // The order is cheap to check here; validating and hashing the problem is left to a pool thread.
    try {
      entropyRequestFrom(kind, alpha);
    } catch (error) {
      if (error instanceof ValidationError) throw new ValidationError(placeError(error).field, error.reason);
      throw error;
    }
    batchPoint.input = { problemJson, entropy: kind, alpha, settings };
    batchPoint.group = groupOf(kind, alpha, problemJson);
  } catch (error) {
    batchPoint.error = failure(error);
  }
  return batchPoint;
}

/** Solved points of one warm-start group. */
interface SolvedPoint {
  coordinates: number[];
  finalState: MatrixJson;
}

export interface BatchRunOptions {
  /** Validates and hashes one point (on a pool thread); bad input throws ValidationError. */
  prepare: (input: SolveInput) => Promise<PreparedSolve>;
  /** Solves one prepared point (the coordinator, with the batch's cancellation signal). */
  solve: (prepared: PreparedSolve) => Promise<DeliveredResult>;
  /** Points solved at the same time (the pool's thread count). */
  concurrency: number;
  /** Start points from their nearest solved neighbour (dropped per group once a warm start does worse than cold). */
  warmStarts: boolean;
  /** Called when a group goes back to cold starts. */
  onWarmStartsDropped?: (group: string, warmIterations: number, coldIterations: number) => void;
  signal?: AbortSignal;
  /** Called once per point, in completion order. */
  onPoint: (point: BatchPoint, outcome: { result?: DeliveredResult; error?: { field: string; message: string } }) => void;
}

function squaredDistance(a: number[], b: number[]): number {
  let sum = 0;
  for (let i = 0; i < a.length; i++) sum += (a[i] - b[i]) ** 2;
  return sum;
}

/**
 * Runs the valid points `concurrency` at a time. Each warm-start group is walked in grid order, and groups with
 * nothing running go first, so that a point usually starts from its direct neighbour's final state. A group's
 * first point starts cold and sets the reference; once a warm-started point needs more iterations than that, the
 * rest of the group starts cold.
 */
export async function runBatch(points: BatchPoint[], options: BatchRunOptions): Promise<void> {
  const queues = new Map<string, BatchPoint[]>();
  const running = new Map<string, number>();
  const solved = new Map<string, SolvedPoint[]>();
  // Iterations of a group's first cold solve; a warm start that needs more than that turns warm starts off for
  // the rest of the group (measured: from a neighbour's boundary optimum some solvers take longer than cold).
  const coldIterations = new Map<string, number>();
  const warmDisabled = new Set<string>();
  for (const point of points) {
    if (point.error !== undefined) {
      options.onPoint(point, { error: point.error });
      continue;
    }
    const queue = queues.get(point.group) ?? [];
    queue.push(point);
    queues.set(point.group, queue);
  }

  const next = (): BatchPoint | undefined => {
    let best: string | undefined;
    let bestKey = -Infinity;
    for (const [group, queue] of queues) {
      if (queue.length === 0) continue;
      // Idle groups first, then the longest remaining chain.
      const key = ((running.get(group) ?? 0) === 0 ? 1e9 : 0) + queue.length;
      if (key > bestKey) {
        bestKey = key;
        best = group;
      }
    }
    return best === undefined ? undefined : queues.get(best)!.shift();
  };

  const warmStartFor = (point: BatchPoint): MatrixJson | undefined => {
    let nearest: SolvedPoint | undefined;
    let distance = Infinity;
    for (const candidate of solved.get(point.group) ?? []) {
      const d = squaredDistance(candidate.coordinates, point.coordinates);
      if (d < distance) {
        distance = d;
        nearest = candidate;
      }
    }
    return nearest?.finalState;
  };

  const runOne = async (point: BatchPoint): Promise<void> => {
    running.set(point.group, (running.get(point.group) ?? 0) + 1);
    try {
      let prepared: PreparedSolve;
      try {
        prepared = await options.prepare(point.input!);
      } catch (error) {
        if (!(error instanceof ValidationError)) throw error;
        options.onPoint(point, { error: point.placeError(error) });
        return;
      }
      point.entropy = ENTROPY_ENUM_NAMES[prepared.request.kind];
      let warmStarted = false;
      if (options.warmStarts && prepared.warmStart === undefined && !warmDisabled.has(point.group)) {
        const warmStart = warmStartFor(point);
        if (warmStart !== undefined && warmStart.rows === prepared.dimensionA * prepared.dimensionB) {
          prepared.warmStart = warmStart;
          warmStarted = true;
        }
      }
      const result = await options.solve(prepared);
      if (!result.fromCache) {
        const reference = coldIterations.get(point.group);
        if (!warmStarted && reference === undefined) coldIterations.set(point.group, result.iterations);
        if (warmStarted && reference !== undefined && result.iterations > reference) {
          warmDisabled.add(point.group);
          options.onWarmStartsDropped?.(point.group, result.iterations, reference);
        }
      }
      if (result.finalState !== undefined && result.status !== 'INFEASIBLE') {
        const list = solved.get(point.group) ?? [];
        list.push({ coordinates: point.coordinates, finalState: result.finalState });
        solved.set(point.group, list);
      }
      options.onPoint(point, { result });
    } catch (error) {
      options.onPoint(point, { error: { field: '', message: (error as Error).message } });
    } finally {
      running.set(point.group, running.get(point.group)! - 1);
    }
  };

  const lanes = Array.from({ length: Math.max(1, options.concurrency) }, async () => {
    for (let point = next(); point !== undefined; point = next()) {
      if (options.signal?.aborted) return;
      await runOne(point);
    }
  });
  await Promise.all(lanes);
}
