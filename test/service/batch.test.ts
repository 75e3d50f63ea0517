// Grid expansion and batch scheduling (the solve step injected; the real solver runs in server.test.ts).
import { describe, expect, it } from 'vitest';
import type { MatrixJson } from '../../src/result/types.js';
import { expandGrid, expandRequestList, runBatch, type BatchPoint } from '../../src/service/batch.js';
import { prepareSolve } from '../../src/service/prepare.js';
import { ENTROPY_ENUM_NAMES } from '../../src/problem/entropy-request.js';
import { buildExample } from '../../src/protocols/index.js';
import type { ParameterGrid__Output } from '../../src/service/generated/renyibound/v1/ParameterGrid.js';
import type { DeliveredResult } from '../../src/service/wire.js';
import { renderSvg, sweepCsv, sweepPlotSpec, sweepTable } from '../../src/client/report.js';
import type { RemoteBatchItem } from '../../src/client/client.js';

function grid(overrides: Partial<ParameterGrid__Output> = {}): ParameterGrid__Output {
  return {
    example: 'bb84-entangled',
    baseParameters: {},
    axes: [
      { name: 'qber-x', values: [0.01, 0.02, 0.03] },
      { name: 'alpha', values: [1.5, 2] },
    ],
    entropies: ['VON_NEUMANN', 'PETZ_UP'],
    settings: null,
    ...overrides,
  };
}

describe('expandGrid', () => {
  it('enumerates kinds, then axes with the first slowest; von Neumann ignores the alpha axis', () => {
    const points = expandGrid(grid());
    expect(points).toHaveLength(3 + 6);
    expect(points.map((p) => p.index)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8]);
    expect(points.slice(0, 3).map((p) => p.point)).toEqual([{ 'qber-x': 0.01 }, { 'qber-x': 0.02 }, { 'qber-x': 0.03 }]);
    expect(points.slice(3, 5).map((p) => p.point)).toEqual([
      { 'qber-x': 0.01, alpha: 1.5 },
      { 'qber-x': 0.01, alpha: 2 },
    ]);
    expect(points.every((p) => p.error === undefined && p.input !== undefined)).toBe(true);
    // Warm-start groups: one for von Neumann, one per order.
    expect(new Set(points.map((p) => p.group)).size).toBe(3);
    expect(points[2].coordinates).toEqual([1]);
  });

  it('puts parameter and order errors on the grid value at fault', () => {
    const points = expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.01, 2] }, { name: 'alpha', values: [0.5] }], entropies: ['PETZ_UP'] }));
    expect(points[0].error).toEqual({ field: 'grid.axes[1].values[0]', message: expect.stringMatching(/\(1, 2\]/) });
    expect(points[1].error?.field).toBe('grid.axes[0].values[1]');
    const base = expandGrid(grid({ baseParameters: { 'qber-z': -1 }, axes: [], entropies: ['VON_NEUMANN'] }));
    expect(base[0].error?.field).toBe('grid.baseParameters.qber-z');
  });

  it('refuses a grid that is bad as a whole', () => {
    expect(() => expandGrid(grid({ example: 'nope' }))).toThrow(/grid\.example/);
    expect(() => expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.1] }, { name: 'qberX', values: [0.2] }] }))).toThrow(/twice/);
  });
});

function fakeResult(tag: number, warmStart: MatrixJson | undefined): DeliveredResult {
  return {
    status: 'CERTIFIED', entropy: 'von-neumann', alpha: null, certifiedLowerBound: tag, upperBound: tag, gap: 0,
    toleranceMargin: 0, statisticalSlack: 0, maxConstraintViolation: 0, iterations: warmStart ? 1 : 10, seconds: 0,
    oracleSeconds: 0, inputHash: String(tag), certificate: null, fromCache: false,
    // A 4×4 final state (bb84-entangled's dimension) tagged with the point it came from.
    finalState: { rows: 4, cols: 4, re: [tag, ...new Array<number>(15).fill(0)] },
  };
}

describe('runBatch', () => {
  it('starts each point from the final state of the nearest solved point of its group', async () => {
    const points = expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.01, 0.02, 0.03, 0.04] }], entropies: ['VON_NEUMANN', 'PETZ_UP'], baseParameters: { alpha: 1.5 } }));
    const startedFrom = new Map<number, number | undefined>();
    await runBatch(points, {
      concurrency: 1,
      warmStarts: true,
      prepare: async (input) => prepareSolve(input),
      solve: async (prepared) => {
        const point = points.find((p) => p.input!.problemJson === prepared.problemJson && p.input!.entropy === ENTROPY_ENUM_NAMES[prepared.request.kind])!;
        startedFrom.set(point.index, prepared.warmStart?.re[0]);
        return fakeResult(point.index, prepared.warmStart);
      },
      onPoint: () => {},
    });
    // Von Neumann points 0–3 chain along qber-x; Petz-up points 4–7 only ever start from Petz-up states.
    expect(startedFrom.get(0)).toBeUndefined();
    expect(startedFrom.get(1)).toBe(0);
    expect(startedFrom.get(3)).toBe(2);
    expect(startedFrom.get(4)).toBeUndefined();
    expect(startedFrom.get(5)).toBe(4);
    expect(startedFrom.get(7)).toBe(6);
  });

  it('goes back to cold starts in a group once a warm start needs more iterations than the cold one did', async () => {
    const points = expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.01, 0.02, 0.03, 0.04, 0.05] }], entropies: ['VON_NEUMANN'] }));
    const warm: boolean[] = [];
    const dropped: number[] = [];
    await runBatch(points, {
      concurrency: 1,
      warmStarts: true,
      prepare: async (input) => prepareSolve(input),
      // Cold: 5 iterations; warm: 8 (worse).
      solve: async (prepared) => {
        warm.push(prepared.warmStart !== undefined);
        return { ...fakeResult(0, prepared.warmStart), iterations: prepared.warmStart ? 8 : 5 };
      },
      onWarmStartsDropped: (_, warmIterations, coldIterations) => dropped.push(warmIterations, coldIterations),
      onPoint: () => {},
    });
    expect(warm).toEqual([false, true, false, false, false]);
    expect(dropped).toEqual([8, 5]);
  });

  it('reports every point once, errors included, and stops dispatching when aborted', async () => {
    const points: BatchPoint[] = expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.01, 5, 0.03, 0.04] }], entropies: ['VON_NEUMANN'] }));
    const seen: number[] = [];
    await runBatch(points, {
      concurrency: 2,
      warmStarts: false,
      prepare: async (input) => prepareSolve(input),
      solve: async (p) => fakeResult(0, p.warmStart),
      onPoint: (p) => seen.push(p.index),
    });
    expect(seen.sort()).toEqual([0, 1, 2, 3]);

    const controller = new AbortController();
    const solved: number[] = [];
    await runBatch(expandGrid(grid({ axes: [{ name: 'qber-x', values: [0.01, 0.02, 0.03, 0.04] }], entropies: ['VON_NEUMANN'] })), {
      concurrency: 1,
      warmStarts: false,
      signal: controller.signal,
      prepare: async (input) => prepareSolve(input),
      solve: async (p) => {
        controller.abort();
        return fakeResult(0, p.warmStart);
      },
      onPoint: (p) => solved.push(p.index),
    });
    expect(solved).toEqual([0]);
  });
});

describe('request lists', () => {
  it('places a preparation error under the request that caused it', async () => {
    const problem = buildExample('bb84-entangled', {});
    const points = expandRequestList({
      requests: [
        { problem: problem as never, entropy: 'VON_NEUMANN', alpha: undefined, settings: null, warmStart: null, requestId: '' },
        { problem: { ...problem, dimensionA: 0 } as never, entropy: 'VON_NEUMANN', alpha: undefined, settings: null, warmStart: null, requestId: '' },
      ],
    });
    const outcomes = new Map<number, unknown>();
    await runBatch(points, {
      concurrency: 1,
      warmStarts: false,
      prepare: async (input) => prepareSolve(input),
      solve: async (p) => fakeResult(1, p.warmStart),
      onPoint: (p, outcome) => outcomes.set(p.index, outcome.error?.field ?? outcome.result?.status),
    });
    expect(outcomes.get(0)).toBe('CERTIFIED');
    expect(outcomes.get(1)).toBe('requests.requests[1].problem.dimensionA');
  });
});

describe('sweep reports', () => {
  const items: RemoteBatchItem[] = [
    { index: 1, point: { qber: 0.02 }, entropy: 'VON_NEUMANN', result: fakeResult(0.5, undefined), done: 2, total: 3 },
    { index: 0, point: { qber: 0.01 }, entropy: 'VON_NEUMANN', result: fakeResult(0.75, undefined), done: 1, total: 3 },
    { index: 2, point: { qber: 0.01, alpha: 2 }, entropy: 'PETZ_UP', error: { field: 'grid.x', message: 'bad, "quoted"' }, done: 3, total: 3 },
  ];

  it('writes CSV rows by index with quoted fields where needed', () => {
    const lines = sweepCsv(items, ['qber', 'alpha']).trim().split('\n');
    expect(lines).toHaveLength(4);
    expect(lines[1].startsWith('0,von-neumann,,0.01,CERTIFIED,,0.75,')).toBe(true);
    expect(lines[3].endsWith(',grid.x,"bad, ""quoted"""')).toBe(true);
  });

  it('tabulates bounds by swept value and series', () => {
    const table = sweepTable(items, ['qber', 'alpha']).split('\n');
    expect(table[0]).toMatch(/qber\s+von-neumann\s+petz-up α=2/);
    expect(table[2]).toMatch(/0\.01\s+0\.75000\s+bad input/);
  });

  it('renders one line per series into an SVG', async () => {
    const svg = await renderSvg(sweepPlotSpec(items, ['qber', 'alpha'], 'test'));
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg.match(/class="mark-line/g)).toHaveLength(1);
    expect(svg).toContain('von-neumann');
  });
});
