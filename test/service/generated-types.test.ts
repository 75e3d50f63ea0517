// The committed TypeScript types must match what proto-loader-gen-types makes of the current .proto files
// with the shared loader options (regenerate with the command in src/service/proto.ts when this fails).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';
import { GENERATED_HEADER, typeGenerationArguments } from '../../src/service/type-generation.js';

function files(directory: string): string[] {
  return readdirSync(directory).flatMap((name) => {
    const path = join(directory, name);
    return statSync(path).isDirectory() ? files(path) : [path];
  });
}

describe('generated service types', () => {
  it('match a fresh generation from proto/ with PROTO_LOADER_OPTIONS', () => {
    const root = packageRoot();
    const output = mkdtempSync(join(tmpdir(), 'renyi-bound-types-'));
    try {
      const generator = join(root, 'node_modules', '.bin', 'proto-loader-gen-types');
      execFileSync(generator, typeGenerationArguments(output), { cwd: root, stdio: 'pipe' });
      const committed = join(root, 'src', 'service', 'generated');
      const fresh = files(output).map((f) => relative(output, f)).sort();
      expect(files(committed).map((f) => relative(committed, f)).sort()).toEqual(fresh);
      for (const name of fresh) {
        let expected = readFileSync(join(output, name), 'utf8');
        if (name === 'service.ts') expected = `${GENERATED_HEADER}\n${expected}`;
        expect(readFileSync(join(committed, name), 'utf8'), name).toBe(expected);
      }
    } finally {
      rmSync(output, { recursive: true, force: true });
    }
  });
});
