// A solve whose arithmetic fails (a kernel's RangeError: a non-finite entry, a singular factor) ends as
// NUMERICAL_ERROR with a message naming the phase, instead of throwing (docs/convergence.md, "Non-finite steps").
// The failure is injected into the third iteration; the reference for the problem itself is Shor & Preskill (2000).
import { describe, expect, it, vi } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';

vi.mock('../../src/frank-wolfe/iterate.js', async (importOriginal) => {
  const original = await importOriginal<typeof import('../../src/frank-wolfe/iterate.js')>();
  return {
    ...original,
    iterate: (...args: Parameters<typeof original.iterate>) => {
      if (args[1].iterations >= 2) throw new RangeError('eigvalsh: entry (0, 0) is not finite (Infinity)');
      return original.iterate(...args);
    },
  };
});

describe('arithmetic failure inside an iteration', () => {
  it('ends as NUMERICAL_ERROR naming the iteration, a result verify reads as stating no bound', () => {
    const problem = problemFromJson(buildExample('bb84-entangled'));
    const result = solve(problem, { kind: 'von-neumann' }, { gapTolerance: 1e-12 });
    expect(result.status).toBe('NUMERICAL_ERROR');
    expect(result.message).toMatch(/^arithmetic failed in iteration 2: eigvalsh: entry \(0, 0\) is not finite/);
    expect(result.certifiedLowerBound).toBeNull();
    expect(result.upperBound).toBeNull();
    expect(verifyResult(problem, { kind: 'von-neumann' }, result).reason).toMatch(/NUMERICAL_ERROR result states no bound/);
  });
});
