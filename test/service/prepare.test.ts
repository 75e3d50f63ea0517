// Request preparation: which α applies, field paths relative to the request, and the memo of repeats.
import { describe, expect, it } from 'vitest';
import { ValidationError } from '../../src/problem/errors.js';
import { buildExample } from '../../src/protocols/index.js';
import { PreparedRequestMemo, prepareSolve } from '../../src/service/prepare.js';

const problem = buildExample('bb84-entangled', { 'qber-x': 0.05 }) as unknown as Record<string, unknown>;

function fieldOf(action: () => unknown): string {
  try {
    action();
  } catch (error) {
    if (error instanceof ValidationError) return error.field;
    throw error;
  }
  throw new Error('expected a ValidationError');
}

describe('prepareSolve', () => {
  it("takes the request's kind and order first, the problem's otherwise, and never an order for von Neumann", () => {
    const withOwn = { ...problem, entropy: 'PETZ_UP', alpha: 1.5 };
    expect(prepareSolve({ problemJson: withOwn }).request).toEqual({ kind: 'petz-up', alpha: 1.5 });
    expect(prepareSolve({ problemJson: withOwn, alpha: 1.8 }).request).toEqual({ kind: 'petz-up', alpha: 1.8 });
    expect(prepareSolve({ problemJson: withOwn, entropy: 'SANDWICHED_UP' }).request).toEqual({ kind: 'sandwiched-up', alpha: 1.5 });
    expect(prepareSolve({ problemJson: withOwn, entropy: 'VON_NEUMANN' }).request.kind).toBe('von-neumann');
    expect(fieldOf(() => prepareSolve({ problemJson: problem }))).toBe('entropy');
  });

  it('names problem fields from the request root and checks settings and warm starts', () => {
    expect(fieldOf(() => prepareSolve({ problemJson: { ...problem, dimensionA: 3 }, entropy: 'VON_NEUMANN' }))).toMatch(/^problem\./);
    expect(fieldOf(() => prepareSolve({ problemJson: problem, entropy: 'VON_NEUMANN', settings: { maxIterations: 0 } }))).toBe('settings.maxIterations');
    expect(fieldOf(() => prepareSolve({ problemJson: problem, entropy: 'VON_NEUMANN', warmStart: { rows: 4, cols: 4, re: new Array(16).fill(0) } }))).toMatch(/^warmStart/);
  });

  it('gives equal problems equal input hashes and different settings different ones', () => {
    const a = prepareSolve({ problemJson: problem, entropy: 'VON_NEUMANN', settings: { gapTolerance: 1e-6 } });
    const b = prepareSolve({ problemJson: structuredClone(problem), entropy: 'VON_NEUMANN', settings: { gapTolerance: 1e-6, timeLimitMs: 5 } });
    const c = prepareSolve({ problemJson: problem, entropy: 'VON_NEUMANN', settings: { gapTolerance: 1e-5 } });
    expect(b.inputHash).toBe(a.inputHash);
    expect(c.inputHash).not.toBe(a.inputHash);
  });
});

describe('PreparedRequestMemo', () => {
  it('prepares a repeated message once, whatever its request id, and hands out separate copies', () => {
    const memo = new PreparedRequestMemo();
    let calls = 0;
    const prepare = () => {
      calls++;
      return prepareSolve({ problemJson: problem, entropy: 'VON_NEUMANN' });
    };
    const first = memo.prepare({ problem, entropy: 'VON_NEUMANN', requestId: 'a' }, prepare);
    const second = memo.prepare({ problem, entropy: 'VON_NEUMANN', requestId: 'b' }, prepare);
    expect(calls).toBe(1);
    expect(second).not.toBe(first);
    expect(second.inputHash).toBe(first.inputHash);
    memo.prepare({ problem, entropy: 'PETZ_UP', alpha: 1.5 }, () => {
      calls++;
      return prepareSolve({ problemJson: problem, entropy: 'PETZ_UP', alpha: 1.5 });
    });
    expect(calls).toBe(2);
  });
});
