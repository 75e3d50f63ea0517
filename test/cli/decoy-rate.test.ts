// `renyi-bound decoy-rate` as a user runs it: the JSON fields scripts read, measured counts, a sweep drawn as SVG,
// and bad input as one line naming the option or field (docs/decoy.md).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { HARBOUR_COUNTS } from '../../src/decoy/demo-scenario.js';
import { packageRoot } from '../../src/problem/proto-options.js';

const root = packageRoot();
const dir = mkdtempSync(join(tmpdir(), 'renyi-bound-decoy-'));
function run(args: string[], command = 'decoy-rate') {
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(root, 'src/cli/main.ts'), command, ...args], { cwd: root, encoding: 'utf8' });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('decoy-rate', () => {
  it('measured counts of one session: ratePerPulse, singlePhotonYieldLower, singlePhotonErrorUpper and the certified result', () => {
    const file = join(dir, 'one-session.json');
    const { sessions, ...rest } = HARBOUR_COUNTS;
    writeFileSync(file, JSON.stringify({ ...rest, sessions: [{ ...sessions[0], counts: sessions[0].records, records: undefined }] }));
    const { status, stdout, stderr } = run(['--counts', file, '--time-limit-ms', '5000']);
    expect(stderr).toBe('');
    expect(status).toBe(0);
    const answer = JSON.parse(stdout) as Record<string, unknown> & { singlePhoton: { certifiedLowerBound: number; certificate: unknown } };
    expect(answer.source).toBe('counts');
    for (const field of ['ratePerPulse', 'singlePhotonYieldLower', 'singlePhotonErrorUpper']) expect(typeof answer[field]).toBe('number');
    expect(answer.singlePhoton.certifiedLowerBound).toBeGreaterThan(0);
    expect(answer.singlePhoton.certificate).not.toBeNull();
    expect(answer.caution).toMatch(/not a security claim/);
  }, 120_000);

  it('an answer saved to a file verifies with `verify <file>`; a tampered rate is invalid, exit 1, with the reason', () => {
    const { status, stdout } = run(['--distance-km', '75']);
    expect(status).toBe(0);
    const answer = JSON.parse(stdout) as { ratePerPulse: number; singlePhoton: { status: string } };
    expect(answer.singlePhoton.status).toBe('CERTIFIED');
    const file = join(dir, 'answer-75km.json');
    writeFileSync(file, stdout);
    const good = run([file], 'verify');
    expect(good.stderr).toBe('');
    expect(good.status).toBe(0);
    expect(JSON.parse(good.stdout)).toMatchObject({ valid: true });
    writeFileSync(file, JSON.stringify({ ...answer, ratePerPulse: answer.ratePerPulse * 1.01 }));
    const bad = run([file], 'verify');
    expect(bad.status).toBe(1);
    expect(JSON.parse(bad.stdout)).toMatchObject({ valid: false, reason: expect.stringMatching(/^ratePerPulse: states/) });
  }, 120_000);

  it('--fit with --sweep-distance and --plot writes an SVG with a log axis and prints the fit', () => {
    const file = join(dir, 'bench.json');
    writeFileSync(file, JSON.stringify({ ...HARBOUR_COUNTS, sessions: HARBOUR_COUNTS.sessions.map(({ records, ...s }) => ({ ...s, counts: records })) }));
    const plot = join(dir, 'sweep.svg');
    const { status, stdout, stderr } = run(['--counts', file, '--fit', '--sweep-distance', '10:30:20', '--plot', plot, '--time-limit-ms', '3000']);
    expect(stderr).toBe('');
    expect(status).toBe(0);
    const answer = JSON.parse(stdout) as { fit: { parameters: Record<string, { value: number }> }; sweep: { rateLower95: number }[] };
    expect(answer.fit.parameters.fiberLossDbPerKm.value).toBeCloseTo(0.19, 2);
    expect(answer.sweep).toHaveLength(2);
    expect(readFileSync(plot, 'utf8')).toMatch(/^<svg/);
  }, 180_000);

  it('bad input names the option', () => {
    const { status, stderr } = run(['--decoys', '0.1,abc']);
    expect(status).toBe(1);
    expect(stderr).toBe('renyi-bound: decoys[1]: must be a finite number (got "abc")\n');
  }, 60_000);

  it('intensities given both as options and in the counts file are refused', () => {
    const file = join(dir, 'bench.json');
    writeFileSync(file, JSON.stringify({ ...HARBOUR_COUNTS, sessions: HARBOUR_COUNTS.sessions.map(({ records, ...s }) => ({ ...s, counts: records })) }));
    const { status, stderr } = run(['--counts', file, '--signal', '0.5']);
    expect(status).toBe(1);
    expect(stderr).toBe('renyi-bound: signal: is taken from the --counts file; do not give both\n');
  }, 60_000);
});
