// The closing line of the test run, checked on a throw-away suite with known outcomes (run in a child vitest).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';

const root = packageRoot();
const suite = mkdtempSync(join(tmpdir(), 'renyi-bound-reporter-'));
afterAll(() => rmSync(suite, { recursive: true, force: true }));

function runSuite(files: Record<string, string>): { status: number | null; lastLine: string } {
  for (const [name, text] of Object.entries(files)) writeFileSync(join(suite, name), text);
  const reporter = join(root, 'test', 'reporters', 'summary-line.ts');
  writeFileSync(
    join(suite, 'vitest.config.mjs'),
    `export default { test: { include: ['*.check.mjs'], reporters: ['default', ${JSON.stringify(reporter)}] } };\n`,
  );
  const run = spawnSync(process.execPath, [join(root, 'node_modules', 'vitest', 'vitest.mjs'), 'run', '--root', suite], {
    cwd: root,
    encoding: 'utf8',
    env: { ...process.env, NO_COLOR: '1', CI: '1' },
  });
  const lines = run.stdout.trim().split('\n');
  return { status: run.status, lastLine: lines[lines.length - 1] };
}

describe('the summary-line reporter', () => {
  it('ends the output with "N passed, N failed, N skipped", counting a file that fails to load as a failure', () => {
    const run = runSuite({
      'a.check.mjs': `import { it, expect } from 'vitest';
it('one', () => expect(1).toBe(1));
it('two', () => expect(2).toBe(2));
it('wrong', () => expect(1).toBe(2));
it.skip('later', () => {});
`,
      'b.check.mjs': `throw new Error('broken at import');\n`,
    });
    expect(run.lastLine).toBe('2 passed, 2 failed, 1 skipped');
    expect(run.status).not.toBe(0);
  });
});
