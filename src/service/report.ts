// Presenting sweep results: CSV rows, a text table, and a vega-lite line chart rendered to SVG by vega.
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { ALPHA_PARAMETER } from './batch.js';
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
        r?.status ?? 'ERROR', r?.limit, r?.certifiedLowerBound, r?.upperBound, r?.gap, r?.toleranceMargin, r?.iterations,
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
      x: { field: 'x', type: 'quantitative', title: x },
      y: { field: 'bound', type: 'quantitative', title: 'certified lower bound (bits per round)' },
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
