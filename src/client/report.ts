// Presenting sweep results on the client: CSV rows, a text table, a JSON file, a vega-lite line chart rendered
// to SVG by vega, and the progress bar.
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, extname } from 'node:path';
import cliProgress from 'cli-progress';
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { ALPHA_PARAMETER } from '../service/batch.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import type { RemoteBatchItem } from './client.js';

/** Human name of an entropy kind with its order: "petz-up α=1.5". */
export function seriesLabel(item: Pick<RemoteBatchItem, 'entropy' | 'point'>): string {
  const kind = item.entropy.toLowerCase().replace(/_/g, '-');
  const alpha = item.point[ALPHA_PARAMETER];
  return alpha === undefined ? kind : `${kind} α=${alpha}`;
}

/** The swept builder parameters (every axis except "alpha"), in grid order. */
export function sweptParameters(axisNames: string[]): string[] {
  return axisNames.filter((name) => name !== ALPHA_PARAMETER);
}

function csvField(value: unknown): string {
  if (value === undefined || value === null) return '';
  const text = String(value);
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** One row per point, sorted by index; numbers at full precision. */
export function sweepCsv(items: RemoteBatchItem[], axisNames: string[]): string {
  const parameters = sweptParameters(axisNames);
  const header = [
    'index', 'entropy', 'alpha', ...parameters, 'status', 'limit', 'certifiedLowerBound', 'upperBound', 'gap',
    'toleranceMargin', 'iterations', 'seconds', 'fromCache', 'inputHash', 'errorField', 'errorMessage',
  ];
  const rows = [...items]
    .sort((a, b) => a.index - b.index)
    .map((item) => {
      const r = item.result;
      return [
        item.index, item.entropy.toLowerCase().replace(/_/g, '-'), item.point[ALPHA_PARAMETER], ...parameters.map((p) => item.point[p]),
        r?.status ?? (item.missing ? 'MISSING' : 'ERROR'), r?.limit, r?.certifiedLowerBound, r?.upperBound, r?.gap, r?.toleranceMargin, r?.iterations,
        r?.seconds, r?.fromCache, r?.inputHash, item.error?.field, item.error?.message,
      ].map(csvField).join(',');
    });
  return [header.join(','), ...rows].join('\n') + '\n';
}

/** Significant digits of bounds in the printed table. */
const TABLE_DIGITS = 5;

/**
 * A table with one row per value of the first swept parameter and one column per series; cells hold the
 * certified lower bound in bits, or the status when there is none.
 */
export function sweepTable(items: RemoteBatchItem[], axisNames: string[]): string {
  const x = sweptParameters(axisNames)[0];
  const series = [...new Set([...items].sort((a, b) => a.index - b.index).map(seriesLabel))];
  const xs = [...new Set(items.map((i) => (x === undefined ? 0 : i.point[x])))].sort((a, b) => a - b);
  const cell = (item: RemoteBatchItem | undefined): string => {
    if (item === undefined) return '';
    if (item.missing) return 'missing';
    if (item.error) return 'bad input';
    const bound = item.result?.certifiedLowerBound;
    return bound === null || bound === undefined ? item.result!.status : bound.toFixed(TABLE_DIGITS);
  };
  const header = [x ?? '', ...series];
  const rows = xs.map((value) => [
    x === undefined ? '' : String(value),
    ...series.map((label) => cell(items.find((i) => seriesLabel(i) === label && (x === undefined || i.point[x] === value)))),
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]) => cells.map((text, c) => text.padStart(widths[c])).join('  ');
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)].join('\n') + '\n';
}

/** Plot size in pixels. */
const PLOT_WIDTH = 560;
const PLOT_HEIGHT = 340;

/** Tick steps are 1, 2 or 5 times a power of ten. */
const ROUND_STEP_MANTISSAS = [1, 2, 5, 10];
/** About this many ticks per axis. */
const TARGET_TICKS = 6;

/**
 * Ticks on round steps covering [low, high]: multiples of 1, 2 or 5 × 10^k, about six of them, so an axis reads
 * 0, 0.02, 0.04 … rather than 0.018, 0.026. Values are rounded to the step's decimals (no 0.30000000000000004).
 */
export function roundTicks(low: number, high: number, target = TARGET_TICKS): number[] {
  if (!Number.isFinite(low) || !Number.isFinite(high)) return [];
  if (high < low) [low, high] = [high, low];
  if (high === low) {
    const spread = low === 0 ? 1 : Math.abs(low) * 0.1;
    low -= spread;
    high += spread;
  }
  const raw = (high - low) / target;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = ROUND_STEP_MANTISSAS.map((m) => m * power).find((candidate) => candidate >= raw) ?? 10 * power;
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  const first = Math.floor(low / step + 1e-9);
  const last = Math.ceil(high / step - 1e-9);
  const ticks: number[] = [];
  for (let k = first; k <= last; k++) ticks.push(Number((k * step).toFixed(decimals)));
  return ticks;
}

/** A quantitative axis with round ticks spanning the data. */
function roundAxis(values: number[], title: string): Record<string, unknown> {
  const ticks = values.length === 0 ? [] : roundTicks(Math.min(...values), Math.max(...values));
  if (ticks.length === 0) return { title };
  return {
    title,
    scale: { domain: [ticks[0], ticks[ticks.length - 1]], nice: false, zero: false },
    axis: { values: ticks },
  };
}

/** The vega-lite chart: certified bound against the first swept parameter, one line per entropy kind and order. */
export function sweepPlotSpec(items: RemoteBatchItem[], axisNames: string[], title: string): TopLevelSpec {
  const x = sweptParameters(axisNames)[0] ?? ALPHA_PARAMETER;
  const others = sweptParameters(axisNames).slice(1);
  const values = items
    .filter((i) => i.result?.certifiedLowerBound !== null && i.result?.certifiedLowerBound !== undefined && i.point[x] !== undefined)
    .map((i) => ({
      x: i.point[x],
      bound: i.result!.certifiedLowerBound,
      series: [seriesLabel(i), ...others.map((p) => `${p}=${i.point[p]}`)].join(', '),
    }));
  return {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title,
    width: PLOT_WIDTH,
    height: PLOT_HEIGHT,
    data: { values },
    mark: { type: 'line', point: true },
    encoding: {
      x: { field: 'x', type: 'quantitative', ...roundAxis(values.map((v) => v.x), x) },
      y: { field: 'bound', type: 'quantitative', ...roundAxis(values.map((v) => v.bound!), 'certified lower bound (bits per round)') },
      // Series names such as "sandwiched-up α=1.25" must not be cut short in the legend.
      color: { field: 'series', type: 'nominal', title: 'entropy', legend: { labelLimit: 400 } },
    },
  };
}

/** Renders a vega-lite spec to SVG text, headless. */
export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const view = new vega.View(vega.parse(compile(spec).spec), { renderer: 'none' });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}

/** A progress bar on standard error: points done, rate, ETA and cache hits; silent when stderr is not a terminal. */
export function progressBar(): { update(item: RemoteBatchItem): void; stop(): void } {
  const bar = new cliProgress.SingleBar(
    {
      format: 'sweep |{bar}| {value}/{total} points | {rate} points/s | ETA {eta_formatted} | {cached} from cache',
      stream: process.stderr,
      hideCursor: true,
      etaBuffer: 20,
    },
    cliProgress.Presets.shades_classic,
  );
  const started = performance.now();
  let cached = 0;
  let running = false;
  return {
    update(item) {
      if (!running) {
        bar.start(item.total, 0, { rate: '0.0', cached: 0 });
        running = true;
      }
      if (item.result?.fromCache) cached++;
      const rate = item.done / Math.max((performance.now() - started) / 1000, 1e-3);
      bar.update(item.done, { rate: rate.toFixed(1), cached });
    },
    stop() {
      if (running) bar.stop();
    },
  };
}

/** What the output files hold: the grid, the items and how long the run took. */
export interface SweepReport {
  items: RemoteBatchItem[];
  seconds: number;
}

/** The JSON file of a sweep: the grid and every item (results with their certificates), by index. */
export function sweepJson(grid: ParameterGrid, report: SweepReport): unknown {
  return {
    grid,
    seconds: report.seconds,
    items: [...report.items].sort((a, b) => a.index - b.index),
  };
}

function writeFile(path: string, text: string): void {
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, text);
}

/** results.csv → results.json */
export function jsonPathFor(csvPath: string): string {
  const extension = extname(csvPath);
  return `${extension === '' ? csvPath : csvPath.slice(0, -extension.length)}.json`;
}

/** The grid's axis names, in order. */
export function axisNamesOf(grid: ParameterGrid): string[] {
  return (grid.axes ?? []).map((a) => a.name!);
}

/** Writes the CSV, JSON and (when asked) SVG files of a finished sweep. */
export async function writeSweepOutputs(
  grid: ParameterGrid,
  report: SweepReport,
  paths: { csv: string; plot?: string; title: string },
): Promise<void> {
  const axisNames = axisNamesOf(grid);
  writeFile(paths.csv, sweepCsv(report.items, axisNames));
  writeFile(jsonPathFor(paths.csv), `${JSON.stringify(sweepJson(grid, report), null, 1)}\n`);
  if (paths.plot !== undefined) writeFile(paths.plot, await renderSvg(sweepPlotSpec(report.items, axisNames, paths.title)));
}
