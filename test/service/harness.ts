// A real server on a loopback port for the service tests, with its log lines captured.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Command } from '../../src/cli/command-line.js';
import { pino } from 'pino';
import { vi } from 'vitest';
import { RenyiBoundServer, type ServerOptions } from '../../src/service/server.js';

export interface LogLine {
  event?: string;
  msg?: string;
  [key: string]: unknown;
}

export interface TestServer {
  server: RenyiBoundServer;
  logs: LogLine[];
  /** Stops the server and removes its cache directory. */
  stop(): Promise<void>;
}

export async function startTestServer(options: ServerOptions = {}): Promise<TestServer> {
  const logs: LogLine[] = [];
  const logger = pino({ level: 'info' }, { write: (line: string) => void logs.push(JSON.parse(line) as LogLine) });
  const cacheDirectory = options.cacheDirectory ?? mkdtempSync(join(tmpdir(), 'renyi-bound-service-'));
  const server = await RenyiBoundServer.start({ host: '127.0.0.1', port: 0, workers: 2, logger, ...options, cacheDirectory });
  return {
    server,
    logs,
    stop: async () => {
      await server.shutdown();
      if (cacheDirectory !== false) rmSync(cacheDirectory, { recursive: true, force: true });
    },
  };
}

/** Binary entropy h(p) in bits. */
export function binaryEntropy(p: number): number {
  if (p <= 0 || p >= 1) return 0;
  return -p * Math.log2(p) - (1 - p) * Math.log2(1 - p);
}

export function sleep(milliseconds: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, milliseconds));
}

/** Polls until `condition` holds or `timeoutMs` passes; returns whether it held. */
export async function eventually(condition: () => boolean, timeoutMs: number): Promise<boolean> {
  const end = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > end) return false;
    await sleep(20);
  }
  return true;
}

/**
 * A deliberately slow but valid problem for the timing-sensitive tests (deadline, cancellation, shutdown, queue):
 * H_A ⊗ H_B with dimension n each, ⟨Φ|ρ|Φ⟩ + Tr(Dρ) ≥ `fidelity` for the maximally entangled Φ and a small diagonal
 * tilt D, key = Alice's computational basis. Each Frank–Wolfe iteration costs tens to hundreds of milliseconds at
 * n = 6, so a run is still going when the test acts; a time limit bounds it. The tilt keeps the constraint generic:
 * the exactly degenerate variant made the eigensolver stop with "QL iteration did not converge" (reported).
 */
/** Size of the diagonal tilt of the slow problem's constraint. */
const SLOW_PROBLEM_TILT = 0.03;

export function slowProblem(fidelity: number, n = 6): unknown {
  const d = n * n;
  const identity = { rows: d, cols: d, re: Array.from({ length: d * d }, (_, k) => (k % (d + 1) === 0 ? 1 : 0)) };
  const maximallyEntangled = new Array<number>(d * d).fill(0);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) maximallyEntangled[(a * n + a) * d + (b * n + b)] = 1 / n;
  for (let k = 0; k < d; k++) maximallyEntangled[k * d + k] += SLOW_PROBLEM_TILT * Math.sin(k + 1);
  const keyProjectors = Array.from({ length: n }, (_, a) => {
    const re = new Array<number>(d * d).fill(0);
    for (let b = 0; b < n; b++) re[(a * n + b) * d + (a * n + b)] = 1;
    return { rows: d, cols: d, re };
  });
  return {
    dimensionA: n,
    dimensionB: n,
    constraints: [{ label: 'fidelity', operator: { rows: d, cols: d, re: maximallyEntangled }, lower: fidelity, upper: 1 }],
    branches: [{ label: 'key', krausOperators: [identity], keyProjectors }],
    description: 'slow synthetic test problem',
  };
}

/**
 * Runs command-line commands through their register() in this process (a child per call would cost seconds of
 * start-up each), capturing standard output, standard error and the exit code.
 */
export async function runRegistered(
  registers: ((program: Command) => void)[],
  args: string[],
): Promise<{ status: number; stdout: string; stderr: string }> {
  const program = new Command('renyi-bound');
  for (const register of registers) register(program);
  let stdout = '';
  let stderr = '';
  const out = vi.spyOn(process.stdout, 'write').mockImplementation((chunk) => ((stdout += String(chunk)), true));
  const err = vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => ((stderr += String(chunk)), true));
  process.exitCode = undefined;
  try {
    await program.run(args);
  } finally {
    out.mockRestore();
    err.mockRestore();
  }
  const status = Number(process.exitCode ?? 0);
  process.exitCode = undefined;
  return { status, stdout, stderr };
}
