// `renyi-bound key-length` spawned as users run it: the example's output accepted as it is, the JSON fields
// scripts rely on, the certified single-round bound re-checked by `verify`, a sweep with its SVG, bad input.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';

vi.setConfig({ testTimeout: 180_000 });

const root = packageRoot();
const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-key-length-'));

function cli(args: string[], input?: string) {
  const result = spawnSync(process.execPath, ['--import', 'tsx', join(root, 'src/cli/main.ts'), ...args], {
    cwd: root,
    input,
    encoding: 'utf8',
  });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

describe('renyi-bound key-length', () => {
  it('accepts `example … --test-probability` as it is and prints the ledger; verify re-checks the single-round bound', () => {
    const example = cli(['example', 'bb84-prepare-measure', '--qber', '0.02', '--transmittance', '0.5', '--test-probability', '0.1']);
    expect(example.status).toBe(0);
    const run = cli(['key-length', '-', '--rounds', '1e9', '--alpha', '1.001', '--no-disk-cache'], example.stdout);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const report = JSON.parse(run.stdout);
    for (const key of ['keyLength', 'ratePerRound', 'alpha', 'scores', 'singleRoundBound', 'terms']) expect(report).toHaveProperty(key);
    expect(report.alpha).toBe(1.001);
    expect(report.ratePerRound).toBe(report.keyLength / 1e9);
    expect(report.keyLength).toBeGreaterThan(0);
    for (const term of report.terms) expect(Object.keys(term).sort()).toEqual(['bits', 'name', 'source']);
    // Single-photon P&M with loss: below p_Z²·η·(1 − 2h(q)) per round at f_EC ≥ 1 (common practice, erasure).
    const h = -(0.02 * Math.log2(0.02) + 0.98 * Math.log2(0.98));
    expect(report.ratePerRound).toBeLessThan(0.9 * 0.25 * 0.5 * (1 - 2 * h));
    writeFileSync(join(directory, 'single.json'), JSON.stringify(report.singleRoundBound));
    writeFileSync(join(directory, 'single-problem.json'), JSON.stringify(report.singleRoundProblem));
    const verify = cli(['verify', join(directory, 'single.json'), '--problem', join(directory, 'single-problem.json')]);
    expect(JSON.parse(verify.stdout).valid).toBe(true);
  });

  it('sweeps n and one channel parameter and draws the SVG', () => {
    const plot = join(directory, 'sweep.svg');
    const run = cli([
      'key-length', '--example', 'bb84-entangled', '--set', 'test-probability=0.05', '--sweep', 'qber-x=0.02,0.04',
      '--rounds', '1e6..1e8:2', '--alpha', '1.001', '--plot', plot, '--no-disk-cache',
    ]);
    expect(run.status).toBe(0);
    const { rounds, points } = JSON.parse(run.stdout);
    expect(rounds).toEqual([1e6, 1e8]);
    expect(points).toHaveLength(4);
    expect(readFileSync(plot, 'utf8')).toMatch(/^<svg/);
  });

  it('rejects bad input with the field and the reason (exit 1)', () => {
    const plain = cli(['example', 'bb84-entangled']).stdout;
    const cases: [string[], string | undefined, string][] = [
      [['key-length', '-', '--rounds', 'many'], plain, 'renyi-bound: rounds: '],
      [['key-length', '-', '--rounds', '1e6', '--no-disk-cache'], plain, 'renyi-bound: honestStatistics: is required'],
      [['key-length', '--example', 'bb84-entangled', '--set', 'test-probability=0.1', '--rounds', '1e6', '--epsilon-completeness', '2'], undefined, 'renyi-bound: epsilon-completeness: must lie in (0, 1)'],
    ];
    for (const [args, input, message] of cases) {
      const run = cli(args, input);
      expect(run.status).toBe(1);
      expect(run.stderr.startsWith(message), run.stderr).toBe(true);
    }
  });
});
