import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Command } from '../../src/cli/command-line.js';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { register as registerEvaluate } from '../../src/cli/evaluate.js';
import { register as registerExample } from '../../src/cli/example.js';
import { readJsonInput } from '../../src/cli/io.js';
import { buildExample, EXAMPLES } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { packageRoot } from '../../src/problem/proto-options.js';

type Run = { status: number | null; stdout: string; stderr: string };

// The real entry point, spawned from its TypeScript source through tsx (the built dist/cli/main.js is the same
// code compiled by tsc). Spawning costs about a second, so only a few checks go this way.
const root = packageRoot();
function spawnCli(args: string[], input?: string): Run {
  const result = spawnSync(process.execPath, ['--import', 'tsx', join(root, 'src/cli/main.ts'), ...args], {
    cwd: root,
    input,
    encoding: 'utf8',
  });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

// The command modules in process, registered as main.ts registers them; output and exit code captured.
async function cli(args: string[], input?: string): Promise<Run> {
  const program = new Command('renyi-bound');
  registerExample(program);
  registerEvaluate(program);
  let stdout = '';
  let stderr = '';
  vi.spyOn(process.stdout, 'write').mockImplementation((chunk) => ((stdout += String(chunk)), true));
  vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => ((stderr += String(chunk)), true));
  const stdinFile = input === undefined ? undefined : file(`stdin-${Math.random().toString(36).slice(2)}.json`, JSON.parse(input));
  process.exitCode = undefined;
  try {
    // '-' (standard input) is exercised by the spawned runs; in process it is replaced by a file with the input.
    await program.run(args.map((a) => (a === '-' && stdinFile !== undefined ? stdinFile : a)));
  } finally {
    vi.restoreAllMocks();
  }
  const status = process.exitCode === undefined ? 0 : Number(process.exitCode);
  process.exitCode = undefined;
  return { status, stdout, stderr };
}

afterEach(() => {
  process.exitCode = undefined;
});

const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-cli-'));
function file(name: string, content: unknown): string {
  const path = join(directory, name);
  writeFileSync(path, JSON.stringify(content));
  return path;
}

const s = 0.5;
const PHI_PLUS = { rows: 4, cols: 4, re: [s, 0, 0, s, 0, 0, 0, 0, 0, 0, 0, 0, s, 0, 0, s] };
const MAXIMALLY_MIXED = { rows: 4, cols: 4, re: [0.25, 0, 0, 0, 0, 0.25, 0, 0, 0, 0, 0.25, 0, 0, 0, 0, 0.25] };

describe('renyi-bound CLI: version, example, evaluate', { timeout: 30_000 }, () => {
  it('the entry point (main.ts) prints the version and an example, reads standard input, exits 1 on bad input', () => {
    const { version } = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { version: string };
    expect(spawnCli(['--version']).stdout.trim()).toBe(version);
    const example = spawnCli(['example', 'chsh-tested', '--win-probability', '0.8']);
    expect(example.status).toBe(0);
    expect(JSON.parse(example.stdout)).toEqual(buildExample('chsh-tested', { 'win-probability': 0.8 }));
    // Standard input and the process exit code on bad input (successful evaluations are checked in process below).
    const bad = spawnCli(['evaluate', '-', '--state', file('phi-spawn.json', PHI_PLUS), '--entropy', 'renyi'], example.stdout);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toBe(
      'renyi-bound: entropy: unknown entropy kind "renyi" (expected one of von-neumann, petz-up, petz-down, sandwiched-up)\n',
    );
  });

  it('example prints the builder’s problem JSON with the given parameters', async () => {
    const { status, stdout } = await cli(['example', 'bb84-prepare-measure', '--qber', '0.03', '--transmittance', '0.5']);
    expect(status).toBe(0);
    const printed = JSON.parse(stdout);
    expect(printed).toEqual(buildExample('bb84-prepare-measure', { qber: 0.03, transmittance: 0.5 }));
    expect(problemFromJson(printed).dimensionB).toBe(3);
  });

  it('example exits 1 naming the parameter for bad input', async () => {
    const unknownParameter = await cli(['example', 'six-state', '--qber-z', '0.1']);
    expect(unknownParameter.status).toBe(1);
    expect(unknownParameter.stderr).toBe('renyi-bound: qber-z: unknown parameter for six-state (expected qber, test-probability)\n');
    const notANumber = await cli(['example', 'six-state', '--qber', 'abc']);
    expect(notANumber.status).toBe(1);
    expect(notANumber.stderr).toContain('qber: must be a finite number');
    expect((await cli(['example', 'nope'])).stderr).toContain('name: unknown example "nope"');
  });

  it('evaluate gives 1 bit on |Φ+⟩ and 0 on the maximally mixed state for every kind (docs/checks.md: purity / full purification)', async () => {
    const problem = file('bb84.json', buildExample('bb84-entangled', {}));
    const phi = file('phi.json', PHI_PLUS);
    const mixed = file('mixed.json', MAXIMALLY_MIXED);
    const kinds: string[][] = [['von-neumann'], ['petz-up', '--alpha', '1.5'], ['petz-down', '--alpha', '2'], ['sandwiched-up', '--alpha', '1.25']];
    for (const kind of kinds) {
      const pure = await cli(['evaluate', problem, '--state', phi, '--entropy', ...kind]);
      expect(pure.status, pure.stderr).toBe(0);
      const pureOutput = JSON.parse(pure.stdout);
      expect(pureOutput.entropy).toBe(kind[0]);
      expect(pureOutput.alpha).toBe(kind[0] === 'von-neumann' ? null : Number(kind[2]));
      expect(pureOutput.value).toBeCloseTo(1, 10);
      expect(pureOutput.gradientNorm).toBeNull(); // rank one: no gradient exists
      // The problem read from standard input ('-').
      const mixedRun = await cli(['evaluate', '-', '--state', mixed, '--entropy', ...kind], JSON.stringify(buildExample('bb84-entangled', {})));
      expect(mixedRun.status, mixedRun.stderr).toBe(0);
      const mixedOutput = JSON.parse(mixedRun.stdout);
      expect(mixedOutput.value).toBeCloseTo(0, 10);
      expect(typeof mixedOutput.gradientNorm).toBe('number');
    }
  });

  it('evaluate takes the entropy from the problem when --entropy is left out', async () => {
    const problem = file('with-entropy.json', { ...buildExample('bb84-entangled', {}), entropy: 'PETZ_UP', alpha: 1.5 });
    const run = await cli(['evaluate', problem, '--state', file('phi-3.json', PHI_PLUS)]);
    expect(run.status, run.stderr).toBe(0);
    expect(JSON.parse(run.stdout)).toMatchObject({ entropy: 'petz-up', alpha: 1.5 });
    expect(JSON.parse(run.stdout).value).toBeCloseTo(1, 10);
  });

  it('evaluate exits 1 naming the field for a bad state, problem or order', async () => {
    const problem = file('bb84-2.json', buildExample('bb84-entangled', {}));
    const badTrace = file('trace.json', { ...MAXIMALLY_MIXED, re: MAXIMALLY_MIXED.re.map((x) => x * 0.9) });
    const traceRun = await cli(['evaluate', problem, '--state', badTrace, '--entropy', 'von-neumann']);
    expect(traceRun.status).toBe(1);
    expect(traceRun.stderr).toMatch(/^renyi-bound: state: must have trace 1 \(got 0\.9/);
    const wrongSize = await cli(['evaluate', problem, '--state', file('small.json', { rows: 2, cols: 2, re: [1, 0, 0, 0] }), '--entropy', 'von-neumann']);
    expect(wrongSize.stderr).toBe('renyi-bound: state: must be 4×4, got 2×2\n');
    const missing = await cli(['evaluate', join(directory, 'absent.json'), '--state', badTrace, '--entropy', 'von-neumann']);
    expect(missing.status).toBe(1);
    expect(missing.stderr).toMatch(/^renyi-bound: problem: cannot read .*absent\.json.*\(ENOENT\)/);
    const badAlpha = await cli(['evaluate', problem, '--state', badTrace, '--entropy', 'petz-up', '--alpha', '0.5']);
    expect(badAlpha.status).toBe(1);
    expect(badAlpha.stderr).toBe('renyi-bound: alpha: must lie in (1, 2] for petz-up; Rényi objectives are not convex outside it\n');
    const notJson = join(directory, 'not-json.json');
    writeFileSync(notJson, '{"rows": 4,');
    const notJsonRun = await cli(['evaluate', problem, '--state', notJson, '--entropy', 'von-neumann']);
    expect(notJsonRun.status).toBe(1);
    expect(notJsonRun.stderr).toMatch(/^renyi-bound: state: is not valid JSON \(/);
    const alphaAlone = await cli(['evaluate', problem, '--state', badTrace, '--alpha', '1.5']);
    expect(alphaAlone.stderr).toBe('renyi-bound: entropy: is required: name it with the command or request, or set entropy in the problem\n');
    const noEntropy = await cli(['evaluate', problem, '--state', badTrace]);
    expect(noEntropy.status).toBe(1);
    expect(noEntropy.stderr).toBe('renyi-bound: entropy: is required: name it with the command or request, or set entropy in the problem\n');
    const badProblem = await cli(['evaluate', '-', '--state', badTrace, '--entropy', 'von-neumann'], '{"dimensionA": 2}');
    expect(badProblem.status).toBe(1);
    expect(badProblem.stderr).toBe('renyi-bound: dimensionB: is required\n');
  });
});

describe('renyi-bound CLI: the α rule, example --list, byte-order marks', { timeout: 30_000 }, () => {
  // Values on |Φ+⟩ are 1 bit for every order (docs/checks.md: purity), so the order used is read from the output.
  it('α: the one given with the command, else the problem’s, else an error for a Rényi kind', async () => {
    const problem = file('petz-1.5.json', { ...buildExample('bb84-entangled', {}), entropy: 'PETZ_UP', alpha: 1.5 });
    const phi = file('phi-rule.json', PHI_PLUS);
    const problemAlpha = await cli(['evaluate', problem, '--state', phi, '--entropy', 'sandwiched-up']);
    expect(problemAlpha.status, problemAlpha.stderr).toBe(0);
    expect(JSON.parse(problemAlpha.stdout)).toMatchObject({ entropy: 'sandwiched-up', alpha: 1.5 });
    const commandAlpha = await cli(['evaluate', problem, '--state', phi, '--alpha', '1.25']);
    expect(JSON.parse(commandAlpha.stdout)).toMatchObject({ entropy: 'petz-up', alpha: 1.25 });
    // Von Neumann has no order: the problem's α (for its own Rényi kind) does not apply.
    const vonNeumann = await cli(['evaluate', problem, '--state', phi, '--entropy', 'von-neumann']);
    expect(JSON.parse(vonNeumann.stdout)).toMatchObject({ entropy: 'von-neumann', alpha: null });
    const plain = file('plain.json', buildExample('bb84-entangled', {}));
    const missing = await cli(['evaluate', plain, '--state', phi, '--entropy', 'petz-down']);
    expect(missing.status).toBe(1);
    expect(missing.stderr).toBe('renyi-bound: alpha: is required for petz-down (a Rényi order in (1, 2])\n');
  });

  it('example --list prints every builder with its parameters, defaults and ranges, read from the definitions', async () => {
    const run = await cli(['example', '--list']);
    expect(run.status, run.stderr).toBe(0);
    const listing = JSON.parse(run.stdout) as { examples: Array<{ name: string; parameters: Array<Record<string, unknown>> }> };
    expect(listing.examples.map((e) => e.name)).toEqual(Object.keys(EXAMPLES));
    for (const example of listing.examples) {
      expect(example.parameters).toEqual(
        EXAMPLES[example.name].parameters.map(({ name, description, defaultValue, minimum, maximum }) => ({
          name,
          description,
          defaultValue,
          minimum,
          maximum,
        })),
      );
      // Building with every listed default gives the builder's default problem.
      const defaults = Object.fromEntries(example.parameters.map((p) => [p.name as string, p.defaultValue as number]));
      expect(buildExample(example.name, defaults)).toEqual(buildExample(example.name));
    }
    expect((await cli(['example'])).stderr).toBe('renyi-bound: name: is required (or give --list to see every example)\n');
    expect((await cli(['example', 'six-state', '--list'])).stderr).toBe('renyi-bound: --list: takes no example name\n');
  });

  it('a JSON file starting with a UTF-8 byte-order mark is read like one without', async () => {
    const withMark = join(directory, 'bom.json');
    writeFileSync(withMark, `\uFEFF${JSON.stringify(buildExample('bb84-entangled', {}))}`, 'utf8');
    expect(readFileSync(withMark)[0]).toBe(0xef); // the mark is really there (EF BB BF)
    const run = await cli(['evaluate', withMark, '--state', file('phi-bom.json', PHI_PLUS), '--entropy', 'von-neumann']);
    expect(run.status, run.stderr).toBe(0);
    expect(JSON.parse(run.stdout).value).toBeCloseTo(1, 10);
    expect(readJsonInput(withMark, 'problem')).toEqual(buildExample('bb84-entangled', {}));
  });
});
