import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { doubleHex, inputHash } from '../../src/problem/hash.js';
import { problemFromJson } from '../../src/problem/validate.js';
import type { EntropyRequest } from '../../src/problem/model.js';
import { baseProblem, type Json } from './fixtures.js';

const SETTINGS = { gapTolerance: 1e-6, maxIterations: 1000 };
const REQUEST: EntropyRequest = { kind: 'petz-up', alpha: 1.5 };
const VERSION = 'test-1';

function hashOf(json: Json, request = REQUEST, settings = SETTINGS, version = VERSION): string {
  return inputHash(problemFromJson(json), request, settings, version);
}

/** The same JSON with every object's keys in reverse order. */
function reverseKeys(value: Json): Json {
  if (Array.isArray(value)) return value.map(reverseKeys);
  if (value !== null && typeof value === 'object') {
    return Object.fromEntries(Object.keys(value).reverse().map((k) => [k, reverseKeys(value[k])]));
  }
  return value;
}

/** Paths to every non-integer-field number in the JSON (integer fields are dimensions and matrix shapes). */
function numberPaths(value: Json, path: (string | number)[] = []): (string | number)[][] {
  if (typeof value === 'number') {
    const last = path[path.length - 1];
    return ['rows', 'cols', 'dimensionA', 'dimensionB'].includes(String(last)) ? [] : [path];
  }
  if (value !== null && typeof value === 'object') {
    return Object.keys(value).flatMap((k) => numberPaths(value[k], [...path, Array.isArray(value) ? Number(k) : k]));
  }
  return [];
}

describe('inputHash', () => {
  it('encodes doubles by their IEEE-754 bits, with -0 as +0', () => {
    // Bit patterns from the IEEE-754 binary64 format (1 = 0x3FF0..., -2 = 0xC000..., 0.1 = 0x3FB999999999999A).
    expect(doubleHex(1)).toBe('3ff0000000000000');
    expect(doubleHex(-2)).toBe('c000000000000000');
    expect(doubleHex(0.1)).toBe('3fb999999999999a');
    expect(doubleHex(-0)).toBe('0000000000000000');
  });

  it('matches the documented encoding written out independently for a one-dimensional problem', () => {
    const json = {
      dimensionA: 1,
      dimensionB: 1,
      branches: [{ krausOperators: [{ rows: 1, cols: 1, re: [1] }], keyProjectors: [{ rows: 1, cols: 1, re: [1] }] }],
    };
    const zero = '0000000000000000';
    // A 1×1 matrix [1]: big-endian binary64 bytes of 1 (re) then 0 (im), as one raw token.
    const oneByOne = Buffer.from('3ff00000000000000000000000000000', 'hex').toString('latin1');
    const lines = [
      'renyi-bound/input-hash/v2',
      'dimensionA', '1', 'dimensionB', '1',
      'sourceMarginal', 'none',
      'constraints', '0',
      'branches', '1',
      'kraus', '1', 'matrix', '1', '1', oneByOne,
      'keyProjectors', '1', 'matrix', '1', '1', oneByOne,
      zero, // score
      'entropy', '11:von-neumann',
      'alpha', 'null',
      'gapTolerance', doubleHex(1e-6),
      'maxIterations', doubleHex(1000),
      'solverVersion', '6:test-1',
    ];
    const expected = createHash('sha256').update(Buffer.from(lines.map((l) => `${l}\n`).join(''), 'latin1')).digest('hex');
    expect(hashOf(json, { kind: 'von-neumann' })).toBe(expected);
    expect(expected).toMatch(/^[0-9a-f]{64}$/);
  });

  it('ignores labels, description, key order, an omitted vs. zero im, and -0', () => {
    const reference = hashOf(baseProblem());
    const relabelled = baseProblem();
    relabelled.constraints[0].label = 'something else';
    relabelled.observations[0].label = '';
    relabelled.branches[0].label = 'other';
    relabelled.description = 'a different description';
    expect(hashOf(relabelled)).toBe(reference);
    expect(hashOf(reverseKeys(baseProblem()))).toBe(reference);
    const explicitZeros = baseProblem();
    explicitZeros.constraints[0].operator.im = new Array(16).fill(0);
    explicitZeros.constraints[0].operator.re[2] = -0;
    expect(hashOf(explicitZeros)).toBe(reference);
  });

  it('changes when any number of the problem changes', () => {
    const reference = hashOf(baseProblem());
    const paths = numberPaths(baseProblem());
    expect(paths).toHaveLength(92); // 16 + 2 operator and bounds, 4 marginal, 16 POVM, 4 + 1 table, 16 + 32 + 1 branch
    for (const path of paths) {
      const changed = baseProblem();
      let parent = changed;
      for (const key of path.slice(0, -1)) parent = parent[key];
      const key = path[path.length - 1];
      // Small enough to pass every validation tolerance, large enough to change the bits.
      // Lower bounds move down so that lower ≤ upper still holds.
      const factor = key === 'lower' ? 1 - 1e-13 : 1 + 1e-13;
      parent[key] = parent[key] === 0 ? 1e-13 : parent[key] * factor;
      expect(hashOf(changed), path.join('.')).not.toBe(reference);
    }
  });

  it('encodes an absent bound distinctly from every finite bound', () => {
    // A one-sided constraint (upper omitted) must never share a cache entry with a two-sided one.
    const withUpper = (upper: number | undefined) => {
      const p = baseProblem();
      if (upper === undefined) delete p.constraints[0].upper;
      else p.constraints[0].upper = upper;
      return hashOf(p);
    };
    const absent = withUpper(undefined);
    const lower = baseProblem().constraints[0].lower as number;
    for (const finite of [lower, lower + 1, 1e300, Number.MAX_VALUE]) expect(absent).not.toBe(withUpper(finite));
  });

  it('changes with the entropy kind, alpha, settings and solver version', () => {
    const hashes = [
      hashOf(baseProblem()),
      hashOf(baseProblem(), { kind: 'petz-down', alpha: 1.5 }),
      hashOf(baseProblem(), { kind: 'petz-up', alpha: 1.25 }),
      hashOf(baseProblem(), { kind: 'von-neumann' }),
      hashOf(baseProblem(), REQUEST, { ...SETTINGS, gapTolerance: 1e-7 }),
      hashOf(baseProblem(), REQUEST, { ...SETTINGS, maxIterations: 1001 }),
      hashOf(baseProblem(), REQUEST, SETTINGS, 'test-2'),
    ];
    expect(new Set(hashes).size).toBe(hashes.length);
    // alpha is null for von Neumann whatever the request carries.
    expect(hashOf(baseProblem(), { kind: 'von-neumann', alpha: 1.5 })).toBe(hashOf(baseProblem(), { kind: 'von-neumann' }));
  });

  it('keeps constraint order (certificate multipliers are indexed by it)', () => {
    const swapped = baseProblem();
    swapped.constraints.push({ ...swapped.constraints[0], lower: 0, upper: 0.5 });
    const other = baseProblem();
    other.constraints.unshift({ ...other.constraints[0], lower: 0, upper: 0.5 });
    expect(hashOf(swapped)).not.toBe(hashOf(other));
  });
});
