// `solve` and `verify` through the real entry point: statuses map to exit codes, bad input names the field.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { packageRoot } from '../../src/problem/proto-options.js';

const root = packageRoot();
function run(args: string[], input?: string) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(root, 'src/cli/main.ts'), ...args], {
    cwd: root,
    input,
    encoding: 'utf8',
  });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}
const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-solve-'));
function file(name: string, content: unknown): string {
  const path = join(directory, name);
  writeFileSync(path, typeof content === 'string' ? content : JSON.stringify(content));
  return path;
}

describe('renyi-bound solve / verify', () => {
  const problemPath = file('bb84.json', buildExample('bb84-entangled', { 'qber-z': 0.05, 'qber-x': 0.05 }));

  it('solves, prints every documented field, and the result verifies (1 − h(0.05), Shor & Preskill 2000)', () => {
    const solved = run(['solve', problemPath, '--entropy', 'von-neumann', '--gap', '1e-7']);
    expect(solved.status).toBe(0);
    const result = JSON.parse(solved.stdout);
    for (const field of ['status', 'certifiedLowerBound', 'upperBound', 'gap', 'toleranceMargin', 'statisticalSlack',
      'maxConstraintViolation', 'iterations', 'seconds', 'inputHash', 'certificate']) {
      expect(result).toHaveProperty(field);
    }
    expect(result.status).toBe('CERTIFIED');
    const h = -0.05 * Math.log2(0.05) - 0.95 * Math.log2(0.95);
    expect(Math.abs(result.certifiedLowerBound - (1 - h))).toBeLessThan(1e-7);
    const verified = run(['verify', '-', '--problem', problemPath], solved.stdout);
    expect(verified.status).toBe(0);
    expect(JSON.parse(verified.stdout).valid).toBe(true);

    result.certificate.claimedBound += 1e-6;
    result.certifiedLowerBound = result.certificate.claimedBound;
    const rejected = run(['verify', file('tampered.json', result), '--problem', problemPath]);
    expect(rejected.status).toBe(1);
    expect(JSON.parse(rejected.stdout).valid).toBe(false);
  });

  it('exits 2 for infeasible statistics (CHSH above Tsirelson’s bound), and verify accepts the Farkas certificate', () => {
    const chsh = file('chsh.json', buildExample('chsh-tested', { 'win-probability': 0.9 }));
    const r = run(['solve', chsh, '--entropy', 'von-neumann']);
    expect(r.status).toBe(2);
    expect(JSON.parse(r.stdout).status).toBe('INFEASIBLE');
    // The Farkas certificate re-checks from the problem alone.
    const checked = run(['verify', '-', '--problem', chsh], r.stdout);
    expect(checked.status).toBe(0);
    expect(JSON.parse(checked.stdout).reason).toMatch(/infeasibility verified/);
  });

  it('verify given a problem file instead of a result says what the file is', () => {
    const r = run(['verify', problemPath, '--problem', problemPath]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/is a problem file, not a solve result/);
  });

  it('verify rejects a result whose upper bound was edited', () => {
    const solved = JSON.parse(run(['solve', problemPath, '--entropy', 'von-neumann']).stdout);
    solved.upperBound += 1e-3;
    solved.gap = solved.upperBound - solved.certifiedLowerBound;
    const rejected = run(['verify', file('edited-upper.json', solved), '--problem', problemPath]);
    expect(rejected.status).toBe(1);
    expect(JSON.parse(rejected.stdout).reason).toMatch(/not F at finalState/);
  });

  it('exits 1 and names the field for bad input', () => {
    const alpha = run(['solve', problemPath, '--entropy', 'petz-up', '--alpha', '3']);
    expect(alpha.status).toBe(1);
    expect(alpha.stderr).toMatch(/alpha: must lie in \(1, 2\]/);
    const gap = run(['solve', problemPath, '--entropy', 'von-neumann', '--gap', '5']);
    expect(gap.status).toBe(1);
    expect(gap.stderr).toMatch(/gapTolerance: must be/);
  });
});
