// A validated problem sent to another thread: the structured clone, rewrapped, is the same problem (same input
// hash, byte for byte) and its matrices work as ComplexMatrix again.
import { describe, expect, it } from 'vitest';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { inputHash } from '../../src/problem/hash.js';
import { problemFromClone } from '../../src/problem/transfer.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { buildExample } from '../../src/protocols/index.js';

describe('problemFromClone', () => {
  it('gives back the problem a structured clone describes', () => {
    const problem = problemFromJson(buildExample('bb84-prepare-measure', {}));
    const clone = structuredClone(problem);
    expect(clone.constraints[0].operator).not.toBeInstanceOf(ComplexMatrix);
    const back = problemFromClone(clone);
    const settings = { gapTolerance: 1e-6, maxIterations: 100 };
    expect(inputHash(back, { kind: 'von-neumann' }, settings, 'v')).toBe(inputHash(problem, { kind: 'von-neumann' }, settings, 'v'));
    for (const c of back.constraints) expect(c.operator).toBeInstanceOf(ComplexMatrix);
    for (const b of back.branches) for (const m of [...b.krausOperators, ...b.keyProjectors]) expect(m).toBeInstanceOf(ComplexMatrix);
    expect(back.sourceMarginal).toBeInstanceOf(ComplexMatrix);
    expect(back.constraints.map((c) => [c.lower, c.upper])).toEqual(problem.constraints.map((c) => [c.lower, c.upper]));
  });
});
