// `renyi-bound sweep <grid.json>`: runs a parameter grid (or one shard of it) spread over the replicas behind
// --server, or on an embedded server, with a progress bar; then writes CSV, JSON and optionally an SVG plot.
import type { Command } from './command-line.js';
import type { SweepOutcome } from '../client/sweep.js';
import { ValidationError } from '../problem/errors.js';
import { readJsonInput, withInputErrors } from './io.js';
import { integerOption, MAX_WORKERS, noticeNewCacheFile, SERVER_OPTION_HELP, serversOption } from './service-options.js';
import { addClientSecurityOptions, type SecurityCommandOptions } from './security-options.js';

/** Exit code when some grid points failed or are missing (the others are still written). */
export const EXIT_SOME_POINTS_FAILED = 1;
/** Largest --in-flight accepted. */
const MAX_IN_FLIGHT = 256;

interface SweepCommandOptions extends SecurityCommandOptions {
  server?: string;
  out: string;
  plot?: string;
  workers?: string;
  cacheDir?: string;
  diskCache: boolean;
  redisUrl?: string;
  warmStart: boolean;
  shard?: string;
  inFlight?: string;
}

/** Where the embedded server keeps results, as the sweep options say (false: memory only). */
export function cacheDirectoryOption(options: { diskCache: boolean; cacheDir?: string }): string | false | undefined {
  return options.diskCache ? options.cacheDir : false;
}

/** The lines a sweep ends with on standard error: failed points, and replicas lost. */
export function reportProblems(outcome: SweepOutcome): boolean {
  const failed = outcome.items.filter((i) => i.error !== undefined);
  for (const item of failed) process.stderr.write(`renyi-bound: point ${item.index}: ${item.error!.field}: ${item.error!.message}\n`);
  if (outcome.lost) {
    process.stderr.write(`renyi-bound: ${outcome.address}: ${outcome.lost.reason}; ${outcome.lost.unfinished} point(s) unfinished\n`);
  }
  return failed.length > 0 || outcome.lost !== undefined;
}

export function register(program: Command): void {
  addClientSecurityOptions(program
    .command('sweep')
    .description('run a parameter grid (an example builder × parameter values × entropy kinds) and write CSV, JSON and a plot')
    .argument('<grid.json>', 'renyibound.v1.ParameterGrid as JSON, or - for standard input')
    .option('--server <servers>', `${SERVER_OPTION_HELP}; without it an embedded server is started on a loopback port`)
    .option('--out <results.csv>', 'CSV output; the JSON output goes next to it with a .json extension', 'sweep-results.csv')
    .option('--plot <plot.svg>', 'SVG plot of the certified bound against the swept parameter')
    .option('--shard <i/N>', 'run only shard i of N (the points whose index is i modulo N); assemble the whole grid later')
    .option('--in-flight <n>', 'points in flight per replica (default 4)')
    .option('--workers <n>', 'threads of the embedded server (default: the cores)')
    .option('--cache-dir <dir>', 'SQLite cache directory of the embedded server')
    .option('--no-disk-cache', 'embedded server keeps results in memory only')
    .option('--redis-url <url>', 'Redis shared with other sweeps and replicas (embedded server)')
    .option('--no-warm-start', 'start every point cold (to measure what warm starts save)'))
    .action(
      withInputErrors(async (gridPath: string, options: SweepCommandOptions) => {
        const { gridFromJson, parseShard, runSweep } = await import('../client/sweep.js');
        const { axisNamesOf, jsonPathFor, progressBar, sweepTable, writeSweepOutputs } = await import('../client/report.js');
        const { commandLineError } = await import('../client/errors.js');
        const grid = gridFromJson(readJsonInput(gridPath, 'grid.json'));
        const server = options.server === undefined ? undefined : await serversOption(options.server);
        if (server !== undefined && options.redisUrl !== undefined) {
          throw new ValidationError('--redis-url', 'is for the embedded server; the servers behind --server have their own');
        }
        const shard = options.shard === undefined ? undefined : parseShard(options.shard);
        if (server !== undefined) {
          const { clientSecurityFromPaths, setDefaultClientSecurity } = await import('../service/security.js');
          setDefaultClientSecurity(clientSecurityFromPaths(options));
        }
        const cacheNotice = noticeNewCacheFile(server === undefined ? cacheDirectoryOption(options) : false);
        const bar = progressBar();
        let outcome: SweepOutcome;
        try {
          outcome = await runSweep(grid, {
            server,
            embedded: {
              workers: integerOption(options.workers, '--workers', 1, MAX_WORKERS),
              cacheDirectory: cacheDirectoryOption(options),
              redisUrl: options.redisUrl,
            },
            shard,
            inFlightPerReplica: integerOption(options.inFlight, '--in-flight', 1, MAX_IN_FLIGHT),
            warmStarts: options.warmStart,
            onItem: (item) => bar.update(item),
          });
        } catch (error) {
          throw commandLineError(error, server ?? 'embedded server');
        } finally {
          bar.stop();
          cacheNotice();
        }
        const title = `${grid.example} sweep${shard ? ` (shard ${shard.index}/${shard.count})` : ''}`;
        await writeSweepOutputs(grid, outcome, { csv: options.out, plot: options.plot, title });
        process.stdout.write(sweepTable(outcome.items, axisNamesOf(grid)));
        const troubled = reportProblems(outcome);
        process.stderr.write(
          `${outcome.items.length} points in ${outcome.seconds.toFixed(1)} s on ${outcome.replicas} replica(s)` +
            `${outcome.retries > 0 ? `, ${outcome.retries} attempt(s) sent again after a replica failed` : ''}; ` +
            `wrote ${options.out}, ${jsonPathFor(options.out)}${options.plot ? `, ${options.plot}` : ''}\n`,
        );
        if (troubled) process.exitCode = EXIT_SOME_POINTS_FAILED;
      }),
    );
}
