// `npm run bench -- --only random-suite [--sizes 4,8,16] [--models 6 | --models 4:8,32:2] [--kinds vn,petz-up]
// [--jobs 2] [--details]`: the seeded random device models of random-models.ts solved for every kind at gap 1e-6
// with the time limits of the targets, every bound verified and compared with F at the generating state.
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { EntropyRequest } from '../problem/model.js';
import type { BenchTable } from './inputs.js';
import { SUITE_DIMENSIONS } from './random-models.js';
import type { SuiteOutcome, SuiteTask } from './random-suite-worker.js';

/** Gap the suite asks for. */
const SUITE_GAP = 1e-6;
/** Time limit per solve by dimension (the targets: d ≤ 16: 5 s, 32: 30 s, 64: 60 s, 128: 5 min). */
const TIME_LIMIT_MS: Readonly<Record<number, number>> = { 4: 5000, 8: 5000, 16: 5000, 32: 30000, 64: 60000, 128: 300000 };
/** Models per dimension by default: about 15 minutes on a 2-core machine. */
const DEFAULT_MODELS: Readonly<Record<number, number>> = { 4: 4, 8: 4, 16: 3, 32: 2, 64: 1, 128: 1 };
/** At d = 128 the default runs von Neumann only (each solve may take its whole 5 minutes). */
const DEFAULT_KINDS_AT_128 = ['von-neumann'];

/** The kinds of the suite by short name: the Rényi kinds at α = 1.5, sandwiched-up also at α = 1.2. */
export const SUITE_KINDS: Readonly<Record<string, EntropyRequest>> = {
  'von-neumann': { kind: 'von-neumann' },
  'petz-up': { kind: 'petz-up', alpha: 1.5 },
  'petz-down': { kind: 'petz-down', alpha: 1.5 },
  'sandwiched-up': { kind: 'sandwiched-up', alpha: 1.5 },
  'sandwiched-up-1.2': { kind: 'sandwiched-up', alpha: 1.2 },
};

export interface SuiteOptions {
  sizes: number[];
  /** Models (seeds 1..n) per dimension. */
  models: Record<number, number>;
  kinds: string[];
  /** Whether `kinds` was given (otherwise d = 128 runs von Neumann only). */
  kindsGiven: boolean;
  jobs: number;
  details: boolean;
}

function optionValue(argv: readonly string[], name: string): string | undefined {
  const at = argv.indexOf(name);
  return at >= 0 ? argv[at + 1] : undefined;
}

/** Reads the suite's options; errors name the option. */
export function suiteOptions(argv: readonly string[]): SuiteOptions {
  const sizesText = optionValue(argv, '--sizes');
  const sizes = sizesText ? sizesText.split(',').map(Number) : [...SUITE_DIMENSIONS];
  for (const d of sizes) if (!SUITE_DIMENSIONS.includes(d)) throw new Error(`--sizes: ${d} is not one of ${SUITE_DIMENSIONS.join(', ')}`);
  const models: Record<number, number> = { ...DEFAULT_MODELS };
  const modelsText = optionValue(argv, '--models');
  if (modelsText !== undefined) {
    for (const part of modelsText.split(',')) {
      const [left, right] = part.includes(':') ? part.split(':') : [null, part];
      const count = Number(right);
      if (!Number.isInteger(count) || count < 1) throw new Error(`--models: ${JSON.stringify(part)} needs a positive integer count`);
      if (left === null) for (const d of SUITE_DIMENSIONS) models[d] = count;
      else models[Number(left)] = count;
    }
  }
  const kindsText = optionValue(argv, '--kinds');
  const kinds = kindsText ? kindsText.split(',') : Object.keys(SUITE_KINDS);
  for (const k of kinds) if (!SUITE_KINDS[k]) throw new Error(`--kinds: ${k} is not one of ${Object.keys(SUITE_KINDS).join(', ')}`);
  const jobsText = optionValue(argv, '--jobs');
  const jobs = jobsText ? Number(jobsText) : Math.min(2, availableParallelism());
  if (!Number.isInteger(jobs) || jobs < 1) throw new Error(`--jobs: must be a positive integer, got ${jobsText}`);
  return { sizes, models, kinds, kindsGiven: kindsText !== undefined, jobs, details: argv.includes('--details') };
}

function workerLocation(): { filename: string; execArgv: string[] } {
  const here = import.meta.url;
  if (here.endsWith('.ts')) return { filename: new URL('./random-suite-worker.ts', here).href, execArgv: ['--import', 'tsx'] };
  return { filename: new URL('./random-suite-worker.js', here).href, execArgv: [] };
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
}

const seconds = (s: number) => (s < 10 ? s.toFixed(2) : s.toFixed(1));

/** Solves every (dimension, model, kind) of the options on `jobs` worker threads; the headline table per d and kind. */
export async function benchRandomSuite(argv: readonly string[] = process.argv): Promise<BenchTable[]> {
  const options = suiteOptions(argv);
  const tasks: (SuiteTask & { kindName: string })[] = [];
  for (const d of options.sizes) {
    const kinds = d === 128 && !options.kindsGiven ? DEFAULT_KINDS_AT_128 : options.kinds;
    for (let seed = 1; seed <= options.models[d]; seed++) {
      for (const kindName of kinds) {
        tasks.push({ dimension: d, seed, request: SUITE_KINDS[kindName], kindName, gapTolerance: SUITE_GAP, timeLimitMs: TIME_LIMIT_MS[d] });
      }
    }
  }
  const { filename, execArgv } = workerLocation();
  const pool = new Piscina({ filename, execArgv, minThreads: options.jobs, maxThreads: options.jobs, idleTimeout: 1000 });
  const started = performance.now();
  // Largest first: the long d = 128 solve then runs beside the many small ones instead of after them.
  const order = [...tasks].sort((a, b) => b.dimension - a.dimension);
  const outcomes = await Promise.all(
    order.map(async (task) => {
      const outcome = (await pool.run(task)) as SuiteOutcome;
      process.stderr.write(`random-suite: ${outcome.name} ${task.kindName}: ${outcome.status}${outcome.limit ? `/${outcome.limit}` : ''} gap ${outcome.gap?.toExponential(1) ?? '-'} in ${seconds(outcome.seconds)} s\n`);
      return { task, outcome };
    }),
  );
  await pool.destroy();
  const wall = (performance.now() - started) / 1000;
  // Worker threads share the process, so its peak resident set covers every solve (the 4 GB target at d = 128).
  const peakMegabytes = Math.round(process.resourceUsage().maxRSS / 1024);

  const rows: (string | number)[][] = [];
  for (const d of options.sizes) {
    for (const kindName of Object.keys(SUITE_KINDS)) {
      const cell = outcomes.filter((o) => o.task.dimension === d && o.task.kindName === kindName).map((o) => o.outcome);
      if (cell.length === 0) continue;
      const certified = cell.filter((o) => o.status === 'CERTIFIED').length;
      const times = cell.map((o) => o.seconds);
      const rest = cell.filter((o) => o.status !== 'CERTIFIED' && o.gap !== null).map((o) => o.gap as number);
      const withBound = cell.filter((o) => o.verified !== null);
      rows.push([
        d,
        kindName,
        cell.length,
        `${Math.round((100 * certified) / cell.length)} %`,
        seconds(median(times)),
        seconds(Math.max(...times)),
        rest.length ? Math.max(...rest).toExponential(1) : '–',
        cell.filter((o) => o.status === 'NUMERICAL_ERROR').length,
        `${withBound.filter((o) => o.verified).length}/${withBound.length}`,
        `${withBound.filter((o) => o.belowTruth).length}/${withBound.length}`,
      ]);
    }
  }
  const tables: BenchTable[] = [
    {
      title: `Random device models (gap ${SUITE_GAP.toExponential(0)}; time limit 5 s for d ≤ 16, 30 s at 32, 60 s at 64, 5 min at 128; ${options.jobs} worker threads, ${seconds(wall)} s wall, peak resident memory ${peakMegabytes} MB)`,
      columns: ['d', 'kind', 'solves', 'CERTIFIED', 'median s', 'worst s', 'worst gap of the rest', 'NUMERICAL_ERROR', 'verified', 'bound ≤ F(truth)'],
      rows,
    },
  ];
  if (options.details) {
    tables.push({
      title: 'Random device models, every solve',
      columns: ['model', 'kind', 'status', 'gap', 's', 'oracle share', 'iterations', 'verified', 'bound ≤ F(truth)'],
      rows: [...outcomes].sort((a, b) => a.task.dimension - b.task.dimension).map(({ task, outcome: o }) => [
        o.name,
        task.kindName,
        o.limit ? `${o.status}/${o.limit}` : o.status,
        o.gap === null ? '–' : o.gap.toExponential(1),
        seconds(o.seconds),
        o.seconds > 0 ? `${Math.round((100 * o.oracleSeconds) / o.seconds)} %` : '–',
        o.iterations,
        String(o.verified),
        String(o.belowTruth),
      ]),
    });
  }
  return tables;
}
