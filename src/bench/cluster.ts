// Cluster benchmarks on loopback (measures only; no assertions): a bounded load test — 50 concurrent clients, a
// mix of cached and fresh BB84-size requests for 60 s against one server process — and the throughput of a
// 200-point BB84 sweep spread over 1, 2 and 3 replica processes with one worker each, the client in a process of
// its own. Both stop by themselves.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import * as grpc from '@grpc/grpc-js';
import { channelSettings } from '../client/channel.js';
import { packageRoot } from '../problem/proto-options.js';
import { buildExample } from '../protocols/index.js';
import type { ParameterGrid } from '../service/generated/renyibound/v1/ParameterGrid.js';
import type { RenyiBoundClient } from '../service/generated/renyibound/v1/RenyiBound.js';
import type { SolveRequest } from '../service/generated/renyibound/v1/SolveRequest.js';
import { loadServicePackage } from '../service/proto.js';
import type { BenchTable } from './inputs.js';
import { quantile, round } from './service.js';

/** The load test's shape, as the issue asks. */
const LOAD_CLIENTS = 50;
const LOAD_SECONDS = 60;
/** Share of requests that repeat one of the pre-solved problems. */
const LOAD_CACHED_SHARE = 0.5;
/** Distinct pre-solved problems the cached requests cycle through. */
const LOAD_CACHED_PROBLEMS = 20;
/** A client that is told RESOURCE_EXHAUSTED waits this long before its next request. */
const LOAD_BACKOFF_MS = 50;
/** Deadline of one load-test request (far above any BB84 solve; a miss would show as a failure). */
const LOAD_DEADLINE_MS = 30_000;
/** Replica counts of the sweep benchmark and its size. */
const REPLICA_COUNTS = [1, 2, 3];
const SWEEP_POINTS_X = 20;
const SWEEP_POINTS_Z = 10;

const cli = join(packageRoot(), 'dist', 'cli', 'main.js');

interface ServeProcess {
  child: ChildProcess;
  address: string;
  stop(): Promise<void>;
}

/** `renyi-bound serve` from dist/ in a process of its own, no disk cache. */
function serve(args: string[]): Promise<ServeProcess> {
  const child = spawn(process.execPath, [cli, 'serve', '--port', '0', '--no-disk-cache', ...args], { stdio: ['ignore', 'pipe', 'inherit'] });
  let output = '';
  return new Promise((resolve, reject) => {
    child.stdout!.on('data', (chunk: Buffer) => {
      output += chunk.toString();
      const match = /"event":"listening".*?"address":"([^"]+)"/.exec(output);
      if (match && !output.includes('"resolved"')) {
        output += '"resolved"';
        resolve({
          child,
          address: match[1],
          stop: () =>
            new Promise<void>((done) => {
              if (child.exitCode !== null) return done();
              child.once('exit', () => done());
              child.kill('SIGTERM');
            }),
        });
      }
    });
    child.once('exit', (code) => reject(new Error(`serve exited (${code}) before listening`)));
  });
}

/** Peak resident set of a process in MiB (Linux VmHWM), or NaN elsewhere. */
function peakRssMiB(pid: number): number {
  try {
    const match = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return match ? Number(match[1]) / 1024 : NaN;
  } catch {
    return NaN;
  }
}

/** A client with its own connection (channels with the same options would otherwise share one). */
function ownClient(address: string): RenyiBoundClient {
  const { credentials, options } = channelSettings();
  const Client = loadServicePackage().renyibound.v1.RenyiBound;
  return new Client(address, credentials, { ...options, 'grpc.use_local_subchannel_pool': 1 });
}

function bb84Request(qberX: number, qberZ: number): SolveRequest {
  return {
    problem: buildExample('bb84-entangled', { 'qber-x': qberX, 'qber-z': qberZ }) as SolveRequest['problem'],
    entropy: 'VON_NEUMANN',
    settings: { gapTolerance: 1e-6 },
  };
}

function call(client: RenyiBoundClient, request: SolveRequest): Promise<grpc.status> {
  return new Promise((resolve) => {
    client.Solve(request, { deadline: new Date(Date.now() + LOAD_DEADLINE_MS) }, (error) => resolve(error ? error.code : grpc.status.OK));
  });
}

/** 50 clients for 60 s, half of the requests cached, half fresh; one server process with one thread per core. */
async function loadTest(): Promise<BenchTable> {
  const workers = availableParallelism();
  const server = await serve(['--workers', String(workers)]);
  const cachedRequests = Array.from({ length: LOAD_CACHED_PROBLEMS }, (_, i) => bb84Request(0.01 + 0.004 * i, 0.02));
  const clients = Array.from({ length: LOAD_CLIENTS }, () => ownClient(server.address));
  const latencies = { cached: [] as number[], fresh: [] as number[] };
  const counts = { ok: 0, exhausted: 0, failed: 0 };
  const failures = new Map<string, number>();
  let fresh = 0;
  try {
    for (const request of cachedRequests) await call(clients[0], request);
    const end = performance.now() + LOAD_SECONDS * 1000;
    await Promise.all(
      clients.map(async (client, c) => {
        for (let k = 0; performance.now() < end; k++) {
          const cached = (k * 7 + c) % 100 < LOAD_CACHED_SHARE * 100;
          // Fresh problems never repeat: a qber-x no other request uses.
          const request = cached ? cachedRequests[(k + c) % LOAD_CACHED_PROBLEMS] : bb84Request(0.005 + 1e-7 * fresh++, 0.03);
          const started = performance.now();
          const code = await call(client, request);
          if (code === grpc.status.OK) {
            counts.ok++;
            latencies[cached ? 'cached' : 'fresh'].push(performance.now() - started);
          } else if (code === grpc.status.RESOURCE_EXHAUSTED) {
            counts.exhausted++;
            await new Promise((resolve) => setTimeout(resolve, LOAD_BACKOFF_MS));
          } else {
            counts.failed++;
            failures.set(grpc.status[code], (failures.get(grpc.status[code]) ?? 0) + 1);
          }
        }
      }),
    );
  } finally {
    for (const client of clients) client.close();
  }
  const serverPeak = peakRssMiB(server.child.pid!);
  await server.stop();
  const all = [...latencies.cached, ...latencies.fresh].sort((a, b) => a - b);
  const cachedSorted = latencies.cached.sort((a, b) => a - b);
  const freshSorted = latencies.fresh.sort((a, b) => a - b);
  const failureText = counts.failed === 0 ? '0' : `${counts.failed} (${[...failures].map(([k, v]) => `${k} ${v}`).join(', ')})`;
  return {
    title:
      `Load: ${LOAD_CLIENTS} concurrent clients (own connections), ${LOAD_SECONDS} s, ${LOAD_CACHED_SHARE * 100} % cached / ` +
      `${100 - LOAD_CACHED_SHARE * 100} % fresh bb84-entangled von Neumann solves (gap 1e-6), one server process with ${workers} worker threads ` +
      `and the default queue limit, clients in the benchmark process; load average ${loadavg()[0].toFixed(1)} when measured`,
    columns: ['answered', 'answered/s', 'fresh solves/s', 'p50 ms (all)', 'p99 ms (all)', 'p50 / p99 ms cached', 'p50 / p99 ms fresh', 'RESOURCE_EXHAUSTED', 'other failures', 'server peak RSS MiB'],
    rows: [
      [
        counts.ok,
        round(counts.ok / LOAD_SECONDS, 1),
        round(latencies.fresh.length / LOAD_SECONDS, 1),
        round(quantile(all, 0.5), 2),
        round(quantile(all, 0.99), 1),
        `${round(quantile(cachedSorted, 0.5), 2)} / ${round(quantile(cachedSorted, 0.99), 1)}`,
        `${round(quantile(freshSorted, 0.5), 2)} / ${round(quantile(freshSorted, 0.99), 1)}`,
        counts.exhausted,
        failureText,
        round(serverPeak, 1),
      ],
    ],
  };
}

/** Runs `renyi-bound sweep` in a child process; its wall time and the sweep's own time from its closing line. */
function sweepProcess(gridPath: string, servers: string, out: string): Promise<{ wall: number; sweepSeconds: number; line: string }> {
  const started = performance.now();
  const child = spawn(process.execPath, [cli, 'sweep', gridPath, '--server', servers, '--out', out], { stdio: ['ignore', 'ignore', 'pipe'] });
  let stderr = '';
  child.stderr!.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
  return new Promise((resolve, reject) =>
    child.once('exit', (code) => {
      const match = /(\d+) points in ([\d.]+) s/.exec(stderr);
      if (code !== 0 || !match) reject(new Error(`sweep failed (${code}): ${stderr}`));
      else resolve({ wall: (performance.now() - started) / 1000, sweepSeconds: Number(match[2]), line: match[0] });
    }),
  );
}

/** A 200-point BB84 sweep (von Neumann) over 1, 2, 3 replica processes with one worker each; fresh points every run. */
async function replicaThroughput(): Promise<BenchTable> {
  const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-bench-'));
  const rows: (string | number)[][] = [];
  let single = 0;
  try {
    for (const count of REPLICA_COUNTS) {
      const replicas = await Promise.all(Array.from({ length: count }, () => serve(['--workers', '1'])));
      try {
        // A grid of its own per row (nothing cached), same shape and solver work.
        const offset = 1e-6 * count;
        const grid: ParameterGrid = {
          example: 'bb84-entangled',
          axes: [
            { name: 'qber-x', values: Array.from({ length: SWEEP_POINTS_X }, (_, i) => 0.01 + 0.005 * i + offset) },
            { name: 'qber-z', values: Array.from({ length: SWEEP_POINTS_Z }, (_, i) => 0.01 + 0.007 * i + offset) },
          ],
          entropies: ['VON_NEUMANN'],
          settings: { gapTolerance: 1e-6 },
        };
        const gridPath = join(directory, `grid-${count}.json`);
        writeFileSync(gridPath, JSON.stringify(grid));
        const run = await sweepProcess(gridPath, replicas.map((r) => r.address).join(','), join(directory, `out-${count}.csv`));
        const rate = SWEEP_POINTS_X * SWEEP_POINTS_Z / run.sweepSeconds;
        if (count === 1) single = rate;
        rows.push([count, SWEEP_POINTS_X * SWEEP_POINTS_Z, round(run.sweepSeconds, 2), round(rate, 1), round(rate / single, 2), round(run.wall, 2)]);
      } finally {
        for (const replica of replicas) await replica.stop();
      }
    }
  } finally {
    rmSync(directory, { recursive: true, force: true });
  }
  return {
    title:
      `Replica throughput: 200-point bb84-entangled sweep (von Neumann, gap 1e-6, nothing cached), replicas as separate processes with one ` +
      `worker each, the sweep client in its own process; ${availableParallelism()} cores, load average ${loadavg()[0].toFixed(1)} when measured`,
    columns: ['replicas', 'points', 'sweep s', 'points/s', 'ratio to 1 replica', 'client process wall s (incl. start-up)'],
    rows,
  };
}

/** Fresh solves timed with Redis up, then after it stops. */
const REDIS_LOSS_SOLVES = 30;

/** A private redis-server on a free port (the benchmark stops it), or undefined when none is installed. */
async function privateRedis(): Promise<{ url: string; stop(): Promise<void> } | undefined> {
  const port = await new Promise<number>((resolve) => {
    const probe = createServer().listen(0, '127.0.0.1', () => {
      const { port: free } = probe.address() as { port: number };
      probe.close(() => resolve(free));
    });
  });
  const child = spawn('redis-server', ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: 'ignore' });
  const started = await new Promise<boolean>((resolve) => {
    child.once('error', () => resolve(false));
    setTimeout(() => resolve(child.exitCode === null), 500);
  });
  if (!started) return undefined;
  return {
    url: `redis://127.0.0.1:${port}`,
    stop: () => new Promise<void>((done) => (child.exitCode !== null ? done() : (child.once('exit', () => done()), child.kill('SIGTERM')))),
  };
}

/** Wall time of fresh (uncached) unary solves on a server whose Redis is up, then stopped: the loss must not slow them. */
async function redisLossLatency(): Promise<BenchTable> {
  const title = 'Fresh bb84-entangled solves (von Neumann, gap 1e-6) on one server with Redis up, then with Redis stopped (client-side wall ms)';
  const columns = ['Redis', 'solves', 'median ms', 'max ms'];
  const redis = await privateRedis();
  if (redis === undefined) return { title, columns, rows: [['redis-server not installed', 0, '', '']] };
  const server = await serve(['--workers', '1', '--redis-url', redis.url]);
  const client = ownClient(server.address);
  const rows: (string | number)[][] = [];
  try {
    for (const state of ['up', 'stopped']) {
      if (state === 'stopped') await redis.stop();
      const times: number[] = [];
      for (let i = 0; i < REDIS_LOSS_SOLVES; i++) {
        const started = performance.now();
        await call(client, bb84Request(0.02 + 1e-6 * i + (state === 'up' ? 0 : 0.01), 0.03));
        times.push(performance.now() - started);
      }
      times.sort((a, b) => a - b);
      rows.push([state, REDIS_LOSS_SOLVES, round(quantile(times, 0.5), 2), round(times[times.length - 1], 1)]);
    }
  } finally {
    client.close();
    await server.stop();
    await redis.stop();
  }
  return { title, columns, rows };
}

export async function benchCluster(): Promise<BenchTable[]> {
  return [await redisLossLatency(), await replicaThroughput(), await loadTest()];
}
