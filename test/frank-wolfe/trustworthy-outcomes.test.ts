// Issue 7's reproductions: statuses that claim only what was checked, one-sided and vacuous constraints,
// inconsistent data, the trivial bound, deadlines, and a verifier that re-checks every stated number.
// Outside references: Shor & Preskill (2000) 1 − h(Q) for entangled BB84; the non-negativity of conditional
// entropies of a classical register (common practice; Tomamichel 2016, §5); the score shift stated in the README.
import { describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { buildExample } from '../../src/protocols/index.js';
import type { EntropyKind, EntropyRequest } from '../../src/problem/model.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { FEASIBILITY_TOLERANCE } from '../../src/problem/violation.js';
import type { SolveResult } from '../../src/result/types.js';
import { binaryEntropy } from '../objectives/fixtures.js';
import { largeProblemJson } from './large-problem.js';
import { KINDS_AT_ONE_AND_A_HALF } from './helpers.js';

const GAP = 1e-6;
const KINDS = KINDS_AT_ONE_AND_A_HALF;
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;
const json = (name: string, params: Record<string, number> = {}): Json => structuredClone(buildExample(name, params));

/** The status rules of the README's result section, checked on any result. */
function expectHonest(result: SolveResult): void {
  if (result.gap !== null) expect(result.gap).toBeGreaterThanOrEqual(0);
  if (result.upperBound !== null) {
    expect(result.relativeConstraintViolation!).toBeLessThanOrEqual(FEASIBILITY_TOLERANCE);
    expect(result.gap).toBe(result.upperBound - result.certifiedLowerBound!);
  }
  if (result.status === 'CERTIFIED') {
    expect(result.upperBound).not.toBeNull();
    expect(result.gap!).toBeLessThanOrEqual(GAP);
  }
}

describe('item 1: a one-sided constraint written with a huge bound', () => {
  // bb84-entangled at Q_Z = Q_X = 0.05: the minimum is 1 − h(0.05) = 0.713603 (Shor & Preskill 2000).
  const exact = 1 - binaryEntropy(0.05);
  for (const lower of [-1e20, -1e9, -1e8, -1e7, -1e6, undefined]) {
    it(`lower = ${lower ?? 'omitted'} certifies 1 − h(0.05) like the two-sided problem`, () => {
      const j = json('bb84-entangled');
      if (lower === undefined) delete j.constraints[0].lower;
      else j.constraints[0].lower = lower;
      const problem = problemFromJson(j);
      const result = solve(problem, { kind: 'von-neumann' }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      expectHonest(result);
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(exact + 1e-12);
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(exact - GAP);
      expect(verifyResult(problem, { kind: 'von-neumann' }, result).valid).toBe(true);
      if (lower !== undefined && lower < -1) expect(result.notes!.join(' ')).toMatch(/never binds; dropped/);
    });
  }

  it('an upper bound above λ_max is dropped too, and the result is unchanged', () => {
    const j = json('bb84-entangled');
    // Only Q_X sets the rate (Shor & Preskill 2000), so a one-sided Q_Z constraint gives 1 − h(0.05) as well.
    j.constraints[0].upper = 1e12;
    const result = solve(problemFromJson(j), { kind: 'von-neumann' }, { gapTolerance: GAP });
    expect(result.status).toBe('CERTIFIED');
    expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - binaryEntropy(0.05) - GAP);
  });
});

describe('item 2: statistics inconsistent with the source marginal end INFEASIBLE, zero cells included', () => {
  // Moving probability between cells of Alice's row changes her outcome frequencies, which her known ρ_A fixes.
  for (const [from, to, zeroCell] of [[4, 0, true], [5, 0, false]] as const) {
    for (const request of KINDS) {
      it(`${request.kind}: 0.0025 moved from cell ${from} to ${to}${zeroCell ? ' (leaving a zero cell)' : ''}`, () => {
        const j = json('bb84-prepare-measure');
        j.observations[0].probabilities[to] += 0.0025;
        j.observations[0].probabilities[from] -= 0.0025;
        if (zeroCell) expect(j.observations[0].probabilities[from]).toBe(0);
        const problem = problemFromJson(j);
        const result = solve(problem, request);
        expect(result.status).toBe('INFEASIBLE');
        expect(result.certifiedLowerBound).toBeNull();
        expect(verifyResult(problem, request, result).valid).toBe(true);
      });
    }
  }
});

describe('item 3: a zero constraint operator is decided exactly', () => {
  const zero = (lower: number, upper: number) => {
    const j = json('bb84-entangled');
    j.constraints.push({ label: 'zero', operator: { rows: 4, cols: 4, re: new Array(16).fill(0) }, lower, upper });
    return problemFromJson(j);
  };
  it('target 0.5 is INFEASIBLE with a Farkas certificate naming it', () => {
    const problem = zero(0.5, 0.5);
    const result = solve(problem, { kind: 'von-neumann' });
    expect(result.status).toBe('INFEASIBLE');
    expect(result.infeasibility!.dominantConstraints).toEqual(['zero']);
    expect(verifyResult(problem, { kind: 'von-neumann' }, result).valid).toBe(true);
  });
  it('target 0 (or an interval holding 0) changes nothing: 1 − h(0.05)', () => {
    for (const [lower, upper] of [[0, 0], [-1, 2]]) {
      const result = solve(zero(lower, upper), { kind: 'von-neumann' }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - binaryEntropy(0.05) - GAP);
    }
  });
});

describe('item 4: verify re-checks the upper bound, its state and the gap', () => {
  const problem = problemFromJson(json('bb84-entangled'));
  const request = { kind: 'von-neumann' as EntropyKind };
  const result = solve(problem, request, { gapTolerance: GAP });
  it('accepts the untouched result', () => {
    expect(verifyResult(problem, request, result)).toMatchObject({ valid: true, reason: 'certificate verified' });
  });
  it('rejects an edited upper bound, an edited gap, a negative gap and an infeasible final state', () => {
    const edits: [string, (r: SolveResult) => void, RegExp][] = [
      ['upperBound', (r) => (r.upperBound = r.upperBound! + 1e-3), /gap/],
      ['upperBound and gap', (r) => ((r.upperBound = r.upperBound! + 1e-3), (r.gap = r.upperBound - r.certifiedLowerBound!)), /not F at finalState/],
      ['gap', (r) => (r.gap = 0), /gap/],
      ['negative gap', (r) => ((r.upperBound = r.certifiedLowerBound! - 0.1), (r.gap = r.upperBound - r.certifiedLowerBound!)), /negative/],
      ['finalState', (r) => (r.finalState = { rows: 4, cols: 4, re: [1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0] }), /violates the constraints/],
      ['upper bound removed from a CERTIFIED result', (r) => ((r.upperBound = null), (r.gap = null)), /needs an upper bound/],
    ];
    for (const [what, edit, reason] of edits) {
      const edited = structuredClone(result);
      edit(edited);
      const report = verifyResult(problem, request, edited);
      expect(report.valid, what).toBe(false);
      expect(report.reason, what).toMatch(reason);
    }
  });
});

describe('item 8: never below the trivial bound', () => {
  // At Q_X = 0.5 the minimum is 1 − h(0.5) = 0 (Shor & Preskill 2000); any certificate lands a hair below it.
  for (const request of KINDS) {
    it(`${request.kind}: BB84 at Q = 0.5 reports the trivial bound 0, says so, and verify reproduces it`, () => {
      const problem = problemFromJson(json('bb84-entangled', { 'qber-z': 0.5, 'qber-x': 0.5 }));
      const result = solve(problem, request, { gapTolerance: GAP });
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(0);
      expect(result.trivialBound).toBe(0);
      expectHonest(result);
      if (result.trivialBoundUsed) expect(result.certifiedLowerBound).toBe(0);
      expect(verifyResult(problem, request, result).valid).toBe(true);
      const lying = { ...result, trivialBoundUsed: false, certifiedLowerBound: result.certificate!.claimedBound };
      if (result.certificate!.claimedBound < 0) expect(verifyResult(problem, request, lying).reason).toMatch(/below the trivial bound/);
    });
  }

  it('with a constant score k on every branch the trivial bound is −k (the README: a constant score shifts by −k)', () => {
    const j = json('bb84-entangled', { 'qber-z': 0.5, 'qber-x': 0.5 });
    for (const b of j.branches) b.score = 0.3;
    const problem = problemFromJson(j);
    const result = solve(problem, { kind: 'petz-up', alpha: 1.5 }, { gapTolerance: GAP });
    expect(result.trivialBound).toBe(-0.3);
    expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(-0.3);
    expect(result.certifiedLowerBound!).toBeLessThanOrEqual(-0.3 + GAP);
    expect(verifyResult(problem, { kind: 'petz-up', alpha: 1.5 }, result).valid).toBe(true);
  });
});

describe('item 6: deadlines are polled in every phase', () => {
  it('d = 256 with two dense constraints and a 2 s limit stops on the time limit with a bound that verifies', () => {
    const problem = problemFromJson(largeProblemJson(16, 16, 2, 5));
    const result = solve(problem, { kind: 'von-neumann' }, { timeLimitMs: 2000 });
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('time');
    expect(result.certifiedLowerBound).not.toBeNull();
    expect(verifyResult(problem, { kind: 'von-neumann' }, result).valid).toBe(true);
    // Generous wall bound (the requirement is 3 s; a loaded test machine stretches single eigensolves).
    expect(result.seconds).toBeLessThan(10);
  });
});

describe('notes', () => {
  it('Petz-down at α = 2 says why its value is 0 for a classical key', () => {
    const result = solve(problemFromJson(json('bb84-entangled')), { kind: 'petz-down', alpha: 2 });
    expect(result.certifiedLowerBound!).toBeLessThanOrEqual(1e-9);
    expect(result.notes!.join(' ')).toMatch(/Petz-down at α = 2.*always 0/);
  });
});
