// A `renyi-bound serve` replica in a child process of its own (it must be killable with SIGKILL), with its JSON
// log lines collected.
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { packageRoot } from '../../src/problem/proto-options.js';
import type { LogLine } from './harness.js';

export interface ReplicaProcess {
  address: string;
  child: ChildProcess;
  logs: LogLine[];
  /** Standard error so far (start-up failures). */
  stderr(): string;
  /** SIGTERM and wait for the exit. */
  stop(): Promise<void>;
}

const root = packageRoot();
/** The CLI from its TypeScript sources (tsx), as the rest of the suite runs it. */
export const CLI = ['--import', 'tsx', join(root, 'src', 'cli', 'main.ts')];

/** Spawns `renyi-bound serve --port 0 <args>` and waits for its "listening" line. */
export function startReplica(args: string[]): Promise<ReplicaProcess> {
  const child = spawn(process.execPath, [...CLI, 'serve', '--port', '0', ...args], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
  const logs: LogLine[] = [];
  let pending = '';
  let errors = '';
  child.stderr!.on('data', (chunk: Buffer) => (errors += chunk.toString()));
  return new Promise((resolve, reject) => {
    child.stdout!.on('data', (chunk: Buffer) => {
      pending += chunk.toString();
      const lines = pending.split('\n');
      pending = lines.pop()!;
      for (const line of lines) {
        if (!line.startsWith('{')) continue;
        const entry = JSON.parse(line) as LogLine;
        logs.push(entry);
        if (entry.event === 'listening') {
          resolve({
            address: String(entry.address),
            child,
            logs,
            stderr: () => errors,
            stop: async () => {
              if (child.exitCode !== null || child.signalCode !== null) return;
              const exited = new Promise((done) => child.once('exit', done));
              child.kill('SIGTERM');
              await exited;
            },
          });
        }
      }
    });
    child.once('exit', (code) => reject(new Error(`serve exited (${code}) before listening: ${errors}`)));
  });
}

/** Runs the CLI to completion in a child process. */
export function runCli(args: string[]): Promise<{ status: number | null; stdout: string; stderr: string }> {
  const child = spawn(process.execPath, [...CLI, ...args], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
  let stdout = '';
  let stderr = '';
  child.stdout!.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
  child.stderr!.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
  return new Promise((resolve) => child.once('exit', (status) => resolve({ status, stdout, stderr })));
}
