// Command-line start-up: each command run in a fresh process (`node dist/cli/main.js …`), as a user or a script
// calls it. Wall time from the parent; CPU (user + system) of the child from bash's `times`. Measures only.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { packageRoot } from '../problem/proto-options.js';
import type { BenchTable } from './inputs.js';

/** Fresh processes timed per command (after one untimed run that warms the file cache). */
const RUNS = 7;

/** Wall-time targets of the start-up issue (idle machine), ms. */
const TARGET_MS: Record<string, number> = { help: 200, example: 200, verify: 200, evaluate: 200, solve: 300 };

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

/** bash `times` prints the shell's and then its children's user/system times as `XmY.YYYs`. */
function childCpuSeconds(timesOutput: string): number {
  const lines = timesOutput.trim().split('\n');
  const children = lines[lines.length - 1].match(/(\d+)m([\d.]+)s\s+(\d+)m([\d.]+)s/);
  if (!children) throw new Error(`bench cli: cannot read bash times output ${JSON.stringify(timesOutput)}`);
  return Number(children[1]) * 60 + Number(children[2]) + Number(children[3]) * 60 + Number(children[4]);
}

function quote(argument: string): string {
  return `'${argument.replace(/'/g, `'\\''`)}'`;
}

/** One fresh `node dist/cli/main.js …` run: wall ms and child CPU ms; throws unless the exit code is expected. */
function runOnce(
  args: string[],
  cwd: string,
  stdoutFile: string | null,
  main = join(packageRoot(), 'dist', 'cli', 'main.js'),
): { wallMs: number; cpuMs: number } {
  const redirect = stdoutFile === null ? '>/dev/null' : `>${quote(stdoutFile)}`;
  const entry = main === '' ? '' : `${quote(main)} `;
  const script = `${quote(process.execPath)} ${entry}${args.map(quote).join(' ')} ${redirect}; status=$?; times >&2; exit $status`;
  const started = performance.now();
  const child = spawnSync('bash', ['-c', script], { cwd, encoding: 'utf8' });
  const wallMs = performance.now() - started;
  if (child.status !== 0) throw new Error(`bench cli: renyi-bound ${args.join(' ')} exited ${child.status}: ${child.stderr}`);
  return { wallMs, cpuMs: childCpuSeconds(child.stderr) * 1000 };
}

export function benchCli(): BenchTable[] {
  const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-cli-bench-'));
  try {
    const problem = join(directory, 'bb84.json');
    const result = join(directory, 'result.json');
    const state = join(directory, 'rho.json');
    runOnce(['example', 'bb84-entangled', '--qber-z', '0.03', '--qber-x', '0.05'], directory, problem);
    runOnce(['solve', problem, '--entropy', 'von-neumann'], directory, result);
    const finalState = (JSON.parse(readFileSync(result, 'utf8')) as { finalState: unknown }).finalState;
    writeFileSync(state, JSON.stringify(finalState));

    const commands: Array<{ name: string; args: string[] }> = [
      { name: 'help', args: ['--help'] },
      { name: 'example', args: ['example', 'bb84-entangled', '--qber-z', '0.03'] },
      { name: 'verify', args: ['verify', result, '--problem', problem] },
      { name: 'evaluate', args: ['evaluate', problem, '--state', state, '--entropy', 'petz-up', '--alpha', '1.2'] },
      { name: 'solve', args: ['solve', problem, '--entropy', 'von-neumann'] },
    ];
    const rows: Array<Array<string | number>> = [];
    const bare = Array.from({ length: RUNS }, () => runOnce(['-e', ''], directory, null, ''));
    rows.push([
      '`node -e ""` (no project code)',
      RUNS,
      median(bare.map((r) => r.wallMs)).toFixed(0),
      median(bare.map((r) => r.cpuMs)).toFixed(0),
      '—',
      '',
    ]);
    for (const command of commands) {
      runOnce(command.args, directory, null);
      const runs = Array.from({ length: RUNS }, () => runOnce(command.args, directory, null));
      const wall = median(runs.map((r) => r.wallMs));
      const cpu = median(runs.map((r) => r.cpuMs));
      const target = TARGET_MS[command.name];
      const shown = command.name === 'help' ? '`--help`' : `\`${command.name}\``;
      rows.push([shown, RUNS, wall.toFixed(0), cpu.toFixed(0), `< ${target}`, wall < target ? 'met' : 'missed']);
    }
    return [
      {
        title: 'Command-line start-up: fresh process per call, BB84-size problem (median of runs)',
        columns: ['command', 'runs', 'wall ms', 'CPU ms (user + system)', 'target wall ms', 'target'],
        rows,
      },
    ];
  } finally {
    rmSync(directory, { recursive: true, force: true });
  }
}
