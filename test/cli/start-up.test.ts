// What a fresh CLI process loads for the commands with start-up targets (--help, example, evaluate, verify, solve;
// `npm run bench -- --only cli` times them): only the packages each one needs, and no CommonJS package through the
// ES-module loader, which scans the whole file for export names at every start (ml-matrix: about 60 ms of a `solve`).
// The processes run the TypeScript sources through tsx with test/cli/start-up-trace.mjs recording every load.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildExample } from '../../src/protocols/index.js';
import { packageRoot } from '../../src/problem/proto-options.js';

const root = packageRoot();
const directory = mkdtempSync(join(tmpdir(), 'renyi-bound-start-up-'));

interface Trace {
  esm: Array<{ url: string; format: string }>;
  commonjs: string[];
}

/** Runs `renyi-bound <args>` in a fresh process and returns what it loaded. */
function traced(args: string[]): Trace & { status: number | null; stdout: string; stderr: string } {
  const traceFile = join(directory, `trace-${Math.random().toString(36).slice(2)}.json`);
  const run = spawnSync(
    process.execPath,
    ['--import', 'tsx', '--import', join(root, 'test/cli/start-up-trace.mjs'), join(root, 'src/cli/main.ts'), ...args],
    { cwd: root, encoding: 'utf8', env: { ...process.env, RENYI_BOUND_START_UP_TRACE: traceFile } },
  );
  return { ...(JSON.parse(readFileSync(traceFile, 'utf8')) as Trace), status: run.status, stdout: run.stdout, stderr: run.stderr };
}

/** The npm package a file belongs to ('@scope/name' or 'name'), or null for the project's own files. */
function packageOf(path: string): string | null {
  const match = /node_modules\/((?:@[^/]+\/)?[^/]+)\//.exec(path);
  return match ? match[1] : null;
}

/** Packages a trace loaded, leaving out tsx and its esbuild (the test's TypeScript runner, not the CLI's). */
function packagesLoaded(trace: Trace): string[] {
  const paths = [...trace.esm.map((e) => decodeURIComponent(e.url)), ...trace.commonjs];
  const names = paths.map(packageOf).filter((p): p is string => p !== null && p !== 'tsx' && p !== 'esbuild');
  return [...new Set(names)].sort();
}

/**
 * The project's modules (relative to src/) a trace loaded that a command run locally has no use for: the optimiser
 * and the oracle (the verifier must not import them), the client and the service (network modules, gRPC).
 * The service's option names are plain strings and allowed.
 */
function remoteOrOptimiserModules(trace: Trace): string[] {
  const source = `${pathToFileURL(join(root, 'src')).href}/`;
  return trace.esm
    .filter((e) => e.url.startsWith(source))
    .map((e) => e.url.slice(source.length))
    .filter((m) => /^(frank-wolfe|oracle|client|service)\//.test(m) && m !== 'service/security-names.ts');
}

/** Packages' CommonJS files that went through the ES-module loader (each one scanned at every start). */
function commonJsThroughEsm(trace: Trace): string[] {
  return trace.esm.filter((e) => e.format === 'commonjs' && packageOf(e.url) !== null).map((e) => e.url);
}

describe('a fresh CLI process loads only what its command needs', () => {
  const problem = join(directory, 'problem.json');
  const state = join(directory, 'state.json');
  const result = join(directory, 'result.json');
  let solveTrace: ReturnType<typeof traced>;

  beforeAll(() => {
    writeFileSync(problem, JSON.stringify(buildExample('bb84-entangled', { 'qber-z': 0.03, 'qber-x': 0.05 })));
    solveTrace = traced(['solve', problem, '--entropy', 'von-neumann']);
    expect(solveTrace.status, solveTrace.stderr).toBe(0);
    writeFileSync(result, solveTrace.stdout);
    writeFileSync(state, JSON.stringify((JSON.parse(solveTrace.stdout) as { finalState: unknown }).finalState));
  }, 120_000);

  it('solve: ml-matrix alone, through require()', () => {
    expect(packagesLoaded(solveTrace)).toEqual(['ml-matrix']);
    expect(commonJsThroughEsm(solveTrace)).toEqual([]);
    expect(solveTrace.commonjs.some((p) => p.endsWith('ml-matrix/matrix.js'))).toBe(true);
  });

  it.each([
    ['--help', ['--help']],
    ['example', ['example', 'bb84-entangled', '--qber-z', '0.03']],
    ['evaluate', ['evaluate', problem, '--state', state, '--entropy', 'petz-up', '--alpha', '1.2']],
    ['verify', ['verify', result, '--problem', problem]],
  ])('%s: no package, and none of the optimiser, client or service code', (_, args) => {
    const trace = traced(args);
    expect(trace.status, trace.stderr).toBe(0);
    expect(packagesLoaded(trace)).toEqual([]);
    expect(remoteOrOptimiserModules(trace)).toEqual([]);
  }, 60_000);

  it('a local solve loads no client or service code either', () => {
    expect(remoteOrOptimiserModules(solveTrace).filter((m) => !/^(frank-wolfe|oracle)\//.test(m))).toEqual([]);
  });

  it('the trace sees a CommonJS package imported through the ES-module loader', () => {
    const script = join(directory, 'imports-ml-matrix.mjs');
    writeFileSync(script, `await import(${JSON.stringify(join(root, 'node_modules/ml-matrix/matrix.mjs'))});\n`);
    const traceFile = join(directory, 'trace-check.json');
    const run = spawnSync(process.execPath, ['--import', join(root, 'test/cli/start-up-trace.mjs'), script], {
      encoding: 'utf8',
      env: { ...process.env, RENYI_BOUND_START_UP_TRACE: traceFile },
    });
    expect(run.status, run.stderr).toBe(0);
    const trace = JSON.parse(readFileSync(traceFile, 'utf8')) as Trace;
    expect(commonJsThroughEsm(trace).map((url) => url.replace(/.*node_modules\//, ''))).toEqual(['ml-matrix/matrix.js']);
    expect(packagesLoaded(trace)).toEqual(['ml-matrix']);
  });
});
