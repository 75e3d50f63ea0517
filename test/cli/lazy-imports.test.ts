// Every command module loads its libraries inside its action (`await import()`), so that `--help` and every
// other command start without paying for the solver, gRPC, SQLite, Redis or the chart libraries. This reads the
// top-level imports of each src/cli/*.ts and allows only light ones; start-up.test.ts checks what a fresh process
// of each timed command actually loads, and `npm run bench -- --only cli` measures it.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';

const CLI = join(packageRoot(), 'src', 'cli');

/** Modules cheap enough to load at start-up (own code with no library behind it). */
const LIGHT = new Set([
  './io.js',
  './service-options.js',
  '../problem/errors.js',
  '../problem/proto-options.js',
  '../problem/entropy-request.js',
  '../protocols/index.js',
  '../protocols/catalogue.js',
  '../cache/directory.js',
  '../service/security-names.js',
]);

/** Node's own modules that load quickly; crypto, the network and process modules wait for the action. */
const LIGHT_BUILTINS = new Set(['node:fs', 'node:path', 'node:os', 'node:url', 'node:util', 'node:module']);

/** Value (not `import type`) imports at the top of a module: `import x from 'm'`, `import { a } from 'm'`. */
function topLevelValueImports(source: string): string[] {
  const imports: string[] = [];
  for (const match of source.matchAll(/^import\s+(?!type\s)([^;]*?)\s+from\s+'([^']+)';/gms)) {
    const clause = match[1];
    // `import { type A, type B } from` brings in nothing at run time.
    const names = clause.replace(/[{}]/g, '').split(',').map((n) => n.trim()).filter((n) => n !== '');
    if (names.length > 0 && names.every((n) => n.startsWith('type '))) continue;
    imports.push(match[2]);
  }
  for (const match of source.matchAll(/^import\s+'([^']+)';/gm)) imports.push(match[1]);
  return imports;
}

describe('command modules import their libraries lazily', () => {
  const files = readdirSync(CLI).filter((f) => f.endsWith('.ts'));

  it.each(files)('%s imports only light modules at the top', (file) => {
    const heavy = topLevelValueImports(readFileSync(join(CLI, file), 'utf8')).filter(
      (m) => !LIGHT.has(m) && !LIGHT_BUILTINS.has(m) && !(m.startsWith('./') && files.includes(m.slice(2).replace(/\.js$/, '.ts'))),
    );
    expect(heavy, `move these into the action with await import(): ${heavy.join(', ')}`).toEqual([]);
  });

  it('the check itself sees a heavy import', () => {
    expect(topLevelValueImports("import { solve } from '../frank-wolfe/solve.js';\nimport type { X } from 'y';\n")).toEqual([
      '../frank-wolfe/solve.js',
    ]);
  });
});
