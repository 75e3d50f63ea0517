// Finite-size key length: one evaluation with α and the scores optimised (entangled BB84; prepare-and-measure BB84
// with loss), a 9-point sweep over n, and the `key-length` command in a fresh process.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { keyLength } from '../finite-size/key-length.js';
import { keyLengthSweep, logSpacedRounds } from '../finite-size/sweep.js';
import { problemFromJson } from '../problem/validate.js';
import { packageRoot } from '../problem/proto-options.js';
import { buildExample } from '../protocols/index.js';
import type { BenchTable } from './inputs.js';

const BB84 = { 'qber-z': 0.02, 'qber-x': 0.02, 'test-probability': 0.02 };
const PREPARE_MEASURE = { qber: 0.02, transmittance: 0.5, 'z-basis-probability': 0.5, 'test-probability': 0.1 };

function seconds(started: number): string {
  return ((performance.now() - started) / 1000).toFixed(2);
}

export async function benchFiniteSize(): Promise<BenchTable[]> {
  const rows: string[][] = [];
  const bb84 = problemFromJson(buildExample('bb84-entangled', BB84));
  const pm = problemFromJson(buildExample('bb84-prepare-measure', PREPARE_MEASURE));
  // Warm the process (JIT, supports) on a different n, then time one evaluation each.
  await keyLength(bb84, { rounds: 1e6, alpha: 1.01, withoutAsymptotic: true });
  for (const [name, problem, target] of [
    ['bb84-entangled, Q = 2 %, γ = 0.02, n = 1e8', bb84, '5 s'],
    ['bb84-prepare-measure, q = 2 %, η = 0.5, γ = 0.1, n = 1e9', pm, '20 s'],
  ] as const) {
    const started = performance.now();
    const report = await keyLength(problem, { rounds: name.includes('1e9') ? 1e9 : 1e8 });
    rows.push([name, seconds(started), target, String(report.search.singleRoundSolves), report.ratePerRound.toPrecision(4), report.alpha.toFixed(5)]);
  }
  const started = performance.now();
  const points = await keyLengthSweep([{ label: 'bb84', problem: bb84 }], logSpacedRounds(1e4, 1e12, 9), {});
  rows.push([
    'sweep over n = 1e4 … 1e12 (9 points), bb84-entangled',
    seconds(started),
    '60 s',
    String(points.reduce((a, p) => a + p.singleRoundSolves, 0)),
    `${points[0].ratePerRound.toPrecision(3)} … ${points[8].ratePerRound.toPrecision(4)}`,
    '',
  ]);

  // Fresh process: the built command (`npm run bench` compiles dist/ first) on a file.
  const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-bench-'));
  try {
    const file = join(directory, 'bb84.json');
    writeFileSync(file, JSON.stringify(buildExample('bb84-entangled', BB84)));
    const spawned = performance.now();
    const main = join(packageRoot(), 'dist/cli/main.js');
    const run = spawnSync(process.execPath, [main, 'key-length', file, '--rounds', '1e8', '--no-disk-cache'], { encoding: 'utf8' });
    if (run.status !== 0) throw new Error(`key-length failed: ${run.stderr}`);
    const report = JSON.parse(run.stdout) as { ratePerRound: number; alpha: number; search: { singleRoundSolves: number } };
    rows.push(['`key-length` in a fresh process (node dist/cli/main.js), bb84-entangled, n = 1e8', seconds(spawned), '—', String(report.search.singleRoundSolves), report.ratePerRound.toPrecision(4), report.alpha.toFixed(5)]);
  } finally {
    rmSync(directory, { recursive: true, force: true });
  }
  return [
    {
      title: 'Finite-size key length, wall seconds (α and scores optimised, sandwiched-up, gap 1e-6)',
      columns: ['case', 'seconds', 'target', 'single-round solves', 'rate per round', 'α'],
      rows,
    },
  ];
}
