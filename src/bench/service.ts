// Service benchmarks: cache-hit round trip over loopback, batch throughput with 1 and 2 worker threads, and
// Frank–Wolfe iterations with and without warm starts over 50-point sweeps. Measures only; no assertions.
import { availableParallelism, loadavg } from 'node:os';
import { pino } from 'pino';
import { buildExample } from '../protocols/index.js';
import { closeClients, connect, solveBatchRemote, type RemoteBatchItem } from '../client/client.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import type { SolveRequest } from '../service/generated/renyibound/v1/SolveRequest.js';
import { RenyiBoundServer } from '../service/server.js';
import type { BenchTable } from './inputs.js';

export type { BenchTable };

/** Round trips timed for the cache-hit median. */
const CACHE_HIT_CALLS = 300;
/** Calls before timing starts (channel set-up, JIT). */
const CACHE_HIT_WARMUP_CALLS = 30;
/** Targets from the service issue. */
const CACHE_HIT_TARGET_MS = 2;
const SPEEDUP_TARGET = 1.8;
const WARM_START_TARGET = 3;

/** Quantile of sorted values by linear interpolation. */
export function quantile(sorted: number[], q: number): number {
  const position = (sorted.length - 1) * q;
  const low = Math.floor(position);
  const high = Math.ceil(position);
  return sorted[low] + (sorted[high] - sorted[low]) * (position - low);
}

export function round(value: number, digits = 3): number {
  return Number(value.toFixed(digits));
}

async function quietServer(workers: number): Promise<RenyiBoundServer> {
  return RenyiBoundServer.start({ port: 0, workers, cacheDirectory: false, logger: pino({ level: 'silent' }) });
}

async function unary(address: string, request: SolveRequest): Promise<void> {
  const { client } = await connect(address);
  return new Promise((resolve, reject) => {
    client.Solve(request, (error) => (error ? reject(error) : resolve()));
  });
}

/** Median client-side time of a Solve answered from the in-memory cache tier. */
async function cacheHitRoundTrip(): Promise<BenchTable> {
  const server = await quietServer(1);
  const rows: (string | number)[][] = [];
  try {
    for (const [name, params] of [
      ['bb84-entangled', { 'qber-x': 0.05 }],
      ['bb84-prepare-measure', { qber: 0.03, transmittance: 0.2 }],
    ] as const) {
      const request: SolveRequest = {
        problem: buildExample(name, params) as SolveRequest['problem'],
        entropy: 'VON_NEUMANN',
        settings: { gapTolerance: 1e-6 },
      };
      await unary(server.address, request);
      for (let i = 0; i < CACHE_HIT_WARMUP_CALLS; i++) await unary(server.address, request);
      const times: number[] = [];
      for (let i = 0; i < CACHE_HIT_CALLS; i++) {
        const started = performance.now();
        await unary(server.address, request);
        times.push(performance.now() - started);
      }
      times.sort((a, b) => a - b);
      const median = quantile(times, 0.5);
      rows.push([name, CACHE_HIT_CALLS, round(median), round(quantile(times, 0.9)), `≤ ${CACHE_HIT_TARGET_MS}`, median <= CACHE_HIT_TARGET_MS ? 'yes' : 'no']);
    }
  } finally {
    closeClients();
    await server.shutdown();
  }
  return {
    title: 'Cache-hit round trip over loopback (unary Solve, in-memory tier, client-side wall time)',
    columns: ['problem', 'calls', 'median ms', 'p90 ms', 'target ms', 'met'],
    rows,
  };
}

async function runGrid(address: string, grid: ParameterGrid, warmStarts: boolean): Promise<{ items: RemoteBatchItem[]; seconds: number }> {
  const started = performance.now();
  const items: RemoteBatchItem[] = [];
  for await (const item of solveBatchRemote(address, { grid, disableWarmStart: !warmStarts }).items) items.push(item);
  return { items, seconds: (performance.now() - started) / 1000 };
}

function spaced(count: number, low: number, high: number): number[] {
  return Array.from({ length: count }, (_, i) => low + ((high - low) * i) / (count - 1));
}

/** Timed batches per thread count; the median is reported. */
const THROUGHPUT_REPETITIONS = 3;
/** Points per timed batch. */
const THROUGHPUT_POINTS_PER_KIND = 60;

/** Points per second of grid batches on a fresh server with 1 and with 2 threads (no cache hits). */
async function batchThroughput(): Promise<BenchTable> {
  // Every batch uses its own transmittance, so nothing is ever answered from the cache.
  const grid = (transmittance: number): ParameterGrid => ({
    example: 'bb84-prepare-measure',
    baseParameters: { transmittance, alpha: 1.5 },
    axes: [{ name: 'qber', values: spaced(THROUGHPUT_POINTS_PER_KIND, 0.01, 0.1) }],
    entropies: ['VON_NEUMANN', 'PETZ_UP'],
    settings: { gapTolerance: 1e-6 },
  });
  const rows: (string | number)[][] = [];
  let single = 0;
  for (const workers of [1, 2]) {
    const server = await quietServer(workers);
    try {
      // Warm-up (JIT and thread start-up in every thread), not timed.
      await runGrid(server.address, grid(0.5), false);
      const timings: { points: number; seconds: number; cpuSeconds: number }[] = [];
      for (let repetition = 0; repetition < THROUGHPUT_REPETITIONS; repetition++) {
        // CPU time of the whole process (all threads), to tell missing parallelism from a busy machine.
        const cpuBefore = process.cpuUsage();
        const { items, seconds } = await runGrid(server.address, grid(0.2 + 0.01 * repetition), false);
        const cpu = process.cpuUsage(cpuBefore);
        timings.push({ points: items.length, seconds, cpuSeconds: (cpu.user + cpu.system) / 1e6 });
      }
      timings.sort((a, b) => a.seconds - b.seconds);
      const median = timings[Math.floor(timings.length / 2)];
      const rate = median.points / median.seconds;
      if (workers === 1) single = rate;
      rows.push([
        workers,
        median.points,
        round(median.seconds),
        round(rate, 1),
        round(rate / single, 2),
        round((1000 * median.cpuSeconds) / median.points, 1),
        round(median.cpuSeconds / median.seconds, 2),
        workers === 2 ? `≥ ${SPEEDUP_TARGET}` : '',
      ]);
    } finally {
      closeClients();
      await server.shutdown();
    }
  }
  return {
    title:
      `Batch throughput (bb84-prepare-measure, von Neumann + Petz-up α=1.5, gap 1e-6, median of ${THROUGHPUT_REPETITIONS} batches; ` +
      `${availableParallelism()} cores, load average ${loadavg()[0].toFixed(1)} when measured)`,
    columns: ['worker threads', 'points', 'seconds', 'points/s', 'speed-up', 'CPU ms/point', 'cores busy', 'target'],
    rows,
  };
}

/** Total Frank–Wolfe iterations of a 50-point sweep, cold versus warm-started from the nearest solved point. */
async function warmStartSaving(): Promise<BenchTable> {
  const sweeps: { label: string; grid: ParameterGrid }[] = [
    {
      label: 'bb84-prepare-measure, qber 0.5–11 %, von Neumann',
      grid: {
        example: 'bb84-prepare-measure',
        baseParameters: { transmittance: 0.2 },
        axes: [{ name: 'qber', values: spaced(50, 0.005, 0.11) }],
        entropies: ['VON_NEUMANN'],
        settings: { gapTolerance: 1e-6 },
      },
    },
    {
      label: 'chsh-tested, win probability 0.78–0.85, von Neumann',
      grid: {
        example: 'chsh-tested',
        baseParameters: {},
        axes: [{ name: 'win-probability', values: spaced(50, 0.78, 0.85) }],
        entropies: ['VON_NEUMANN'],
        settings: { gapTolerance: 1e-6 },
      },
    },
  ];
  const rows: (string | number)[][] = [];
  for (const sweep of sweeps) {
    const measured: { iterations: number; seconds: number; certified: number }[] = [];
    for (const warm of [false, true]) {
      // A fresh server per mode: nothing cached, so every point is solved.
      const server = await quietServer(availableParallelism());
      try {
        const { items, seconds } = await runGrid(server.address, sweep.grid, warm);
        measured.push({
          iterations: items.reduce((n, i) => n + (i.result?.iterations ?? 0), 0),
          seconds,
          certified: items.filter((i) => i.result?.status === 'CERTIFIED').length,
        });
      } finally {
        closeClients();
        await server.shutdown();
      }
    }
    const [cold, warm] = measured;
    rows.push([
      sweep.label,
      cold.iterations,
      warm.iterations,
      round(cold.iterations / Math.max(warm.iterations, 1), 2),
      round(cold.seconds, 2),
      round(warm.seconds, 2),
      `${cold.certified}/${warm.certified}`,
      `≥ ${WARM_START_TARGET}×`,
    ]);
  }
  return {
    title:
      'Warm starts across a 50-point sweep (total Frank–Wolfe iterations, fresh server, no cache; warm = the ' +
      "service's default, which drops warm starts in a group once one needs more iterations than its cold start)",
    columns: ['sweep', 'cold iterations', 'warm iterations', 'ratio', 'cold s', 'warm s', 'certified cold/warm', 'target'],
    rows,
  };
}

export async function benchService(): Promise<BenchTable[]> {
  return [await cacheHitRoundTrip(), await batchThroughput(), await warmStartSaving()];
}
