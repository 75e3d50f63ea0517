// `renyi-bound assemble <grid.json>`: builds a sweep's CSV, JSON and SVG from the cache the shards wrote, without
// recomputing. Points without a verified cached result are listed and the command exits 1, unless
// --compute-missing asks for them to be solved (on --server, or on an embedded server).
import type { Command } from './command-line.js';
import { readJsonInput, withInputErrors } from './io.js';
import { SERVER_OPTION_HELP, serversOption } from './service-options.js';
import { cacheDirectoryOption, EXIT_SOME_POINTS_FAILED, reportProblems } from './sweep.js';

interface AssembleCommandOptions {
  out: string;
  plot?: string;
  cacheDir?: string;
  diskCache: boolean;
  redisUrl?: string;
  computeMissing?: boolean;
  server?: string;
}

export function register(program: Command): void {
  program
    .command('assemble')
    .description('write a sweep\'s CSV, JSON and plot from the cache (after sharded runs); nothing is recomputed unless asked')
    .argument('<grid.json>', 'the grid the shards ran (renyibound.v1.ParameterGrid as JSON), or - for standard input')
    .option('--out <results.csv>', 'CSV output; the JSON output goes next to it with a .json extension', 'sweep-results.csv')
    .option('--plot <plot.svg>', 'SVG plot of the certified bound against the swept parameter')
    .option('--redis-url <url>', 'the shared Redis the shards wrote to')
    .option('--cache-dir <dir>', 'SQLite cache directory to read (default: the user cache directory)')
    .option('--no-disk-cache', 'read no SQLite file (Redis only)')
    .option('--compute-missing', 'solve the points missing from the cache instead of reporting them')
    .option('--server <servers>', `with --compute-missing: where to solve them (${SERVER_OPTION_HELP}); default an embedded server`)
    .action(
      withInputErrors(async (gridPath: string, options: AssembleCommandOptions) => {
        const { gridFromJson, runSweep } = await import('../client/sweep.js');
        const { assembleFromCache } = await import('../client/assemble.js');
        const { axisNamesOf, jsonPathFor, sweepTable, writeSweepOutputs } = await import('../client/report.js');
        const { commandLineError } = await import('../client/errors.js');
        const started = performance.now();
        const grid = gridFromJson(readJsonInput(gridPath, 'grid.json'));
        const server = options.server === undefined ? undefined : await serversOption(options.server);
        const cacheDirectory = cacheDirectoryOption(options);
        const assembly = await assembleFromCache(grid, {
          cacheDirectory,
          redisUrl: options.redisUrl,
          onCacheEvent: (message) => process.stderr.write(`renyi-bound: cache: ${message}\n`),
        });
        let items = assembly.items;
        let lost = false;
        if (options.computeMissing && assembly.missing.length > 0) {
          process.stderr.write(`renyi-bound: solving ${assembly.missing.length} point(s) missing from the cache\n`);
          try {
            const outcome = await runSweep(grid, {
              server,
              embedded: { cacheDirectory, redisUrl: options.redisUrl },
              only: new Set(assembly.missing),
            });
            const solved = new Map(outcome.items.map((item) => [item.index, item]));
            items = items.map((item) => solved.get(item.index) ?? item);
            lost = reportProblems({ ...outcome, items: [] });
          } catch (error) {
            throw commandLineError(error, server ?? 'embedded server');
          }
        }
        await writeSweepOutputs(grid, { items, seconds: (performance.now() - started) / 1000 }, {
          csv: options.out,
          plot: options.plot,
          title: `${grid.example} sweep`,
        });
        process.stdout.write(sweepTable(items, axisNamesOf(grid)));
        const missing = items.filter((item) => item.missing);
        const failed = items.filter((item) => item.error !== undefined && !item.missing);
        for (const item of failed) process.stderr.write(`renyi-bound: point ${item.index}: ${item.error!.field}: ${item.error!.message}\n`);
        for (const item of missing) {
          const where = Object.entries(item.point).map(([name, value]) => `${name}=${value}`).join(' ');
          process.stderr.write(`renyi-bound: point ${item.index} (${item.entropy.toLowerCase()} ${where}): missing from the cache\n`);
        }
        process.stderr.write(
          `${items.length} points: ${items.length - missing.length - failed.length} from the cache or solved, ${missing.length} missing, ` +
            `${failed.length} bad; wrote ${options.out}, ${jsonPathFor(options.out)}${options.plot ? `, ${options.plot}` : ''}\n`,
        );
        if (missing.length > 0 || failed.length > 0 || lost) process.exitCode = EXIT_SOME_POINTS_FAILED;
      }),
    );
}
