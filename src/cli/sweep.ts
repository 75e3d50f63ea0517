// `renyi-bound sweep <grid.json>`: runs a parameter grid on a server (or an embedded one) with a progress bar,
// then writes CSV, JSON and optionally an SVG plot.
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, extname } from 'node:path';
import type { Command } from 'commander';
import type { RemoteBatchItem } from '../service/client.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import type { SweepOutcome } from '../service/sweep.js';
import { readJsonInput, withInputErrors } from './io.js';
import { integerOption, MAX_WORKERS, serverAddressOption } from './service-options.js';

/** Exit code when some grid points failed (the others are still written). */
export const EXIT_SOME_POINTS_FAILED = 1;

/** A progress bar on standard error: points done, rate, ETA and cache hits; silent when stderr is not a terminal. */
export async function progressBar(): Promise<{ update(item: RemoteBatchItem): void; stop(): void }> {
  const { default: cliProgress } = await import('cli-progress');
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

/** The JSON file of a sweep: the grid and every item (results with their certificates), by index. */
export function sweepJson(grid: ParameterGrid, outcome: SweepOutcome): unknown {
  return {
    grid,
    seconds: outcome.seconds,
    items: [...outcome.items].sort((a, b) => a.index - b.index),
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

/** Writes the CSV, JSON and (when asked) SVG files of a finished sweep. */
export async function writeSweepOutputs(
  grid: ParameterGrid,
  outcome: SweepOutcome,
  paths: { csv: string; plot?: string; title: string },
): Promise<void> {
  const { renderSvg, sweepCsv, sweepPlotSpec } = await import('../service/report.js');
  const axisNames = (grid.axes ?? []).map((a) => a.name!);
  writeFile(paths.csv, sweepCsv(outcome.items, axisNames));
  writeFile(jsonPathFor(paths.csv), `${JSON.stringify(sweepJson(grid, outcome), null, 1)}\n`);
  if (paths.plot !== undefined) writeFile(paths.plot, await renderSvg(sweepPlotSpec(outcome.items, axisNames, paths.title)));
}

interface SweepCommandOptions {
  server?: string;
  out: string;
  plot?: string;
  workers?: string;
  cacheDir?: string;
  diskCache: boolean;
  warmStart: boolean;
}

export function register(program: Command): void {
  program
    .command('sweep')
    .description('run a parameter grid (an example builder × parameter values × entropy kinds) and write CSV, JSON and a plot')
    .argument('<grid.json>', 'renyibound.v1.ParameterGrid as JSON, or - for standard input')
    .option('--server <host:port>', 'a running server; without it an embedded server is started on a loopback port')
    .option('--out <results.csv>', 'CSV output; the JSON output goes next to it with a .json extension', 'sweep-results.csv')
    .option('--plot <plot.svg>', 'SVG plot of the certified bound against the swept parameter')
    .option('--workers <n>', 'threads of the embedded server (default: the cores)')
    .option('--cache-dir <dir>', 'SQLite cache directory of the embedded server')
    .option('--no-disk-cache', 'embedded server keeps results in memory only')
    .option('--no-warm-start', 'start every point cold (to measure what warm starts save)')
    .action(
      withInputErrors(async (gridPath: string, options: SweepCommandOptions) => {
        const { gridFromJson, runSweep } = await import('../service/sweep.js');
        const { sweepTable } = await import('../service/report.js');
        const grid = gridFromJson(readJsonInput(gridPath, 'grid.json'));
        const bar = await progressBar();
        let outcome: SweepOutcome;
        try {
          outcome = await runSweep(grid, {
            server: options.server === undefined ? undefined : serverAddressOption(options.server),
            workers: integerOption(options.workers, '--workers', 1, MAX_WORKERS),
            cacheDirectory: options.diskCache ? options.cacheDir : false,
            warmStarts: options.warmStart,
            onItem: (item) => bar.update(item),
          });
        } finally {
          bar.stop();
        }
        await writeSweepOutputs(grid, outcome, { csv: options.out, plot: options.plot, title: `${grid.example} sweep` });
        const axisNames = (grid.axes ?? []).map((a) => a.name!);
        process.stdout.write(sweepTable(outcome.items, axisNames));
        const failed = outcome.items.filter((i) => i.error !== undefined);
        for (const item of failed) process.stderr.write(`renyi-bound: point ${item.index}: ${item.error!.field}: ${item.error!.message}\n`);
        process.stderr.write(
          `${outcome.items.length} points in ${outcome.seconds.toFixed(1)} s; wrote ${options.out}, ${jsonPathFor(options.out)}` +
            `${options.plot ? `, ${options.plot}` : ''}\n`,
        );
        if (failed.length > 0) process.exitCode = EXIT_SOME_POINTS_FAILED;
      }),
    );
}
