// The certified solver against published values and independent computations; sources beside each check.
import { describe, expect, it } from 'vitest';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { matrixFromJson } from '../../src/problem/json.js';
import { createObjective } from '../../src/objectives/index.js';
import type { EntropyKind, Problem } from '../../src/problem/model.js';
import { bellDiagonal, binaryEntropy } from '../objectives/fixtures.js';
import { deviceIndependentBound, example } from './helpers.js';

const GAP = 1e-6;

function expectVerified(problem: Problem, kind: EntropyKind, alpha: number | undefined, result: ReturnType<typeof solve>) {
  const report = verifyResult(problem, { kind, alpha }, result);
  expect(report.reason).toBe('certificate verified');
  expect(report.valid).toBe(true);
}

/** Golden-section minimum of a convex function on [lo, hi] (an optimiser independent of the solver's). */
function goldenMinimum(f: (t: number) => number, lo: number, hi: number): number {
  const r = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  let c = b - r * (b - a);
  let d = a + r * (b - a);
  let fc = f(c);
  let fd = f(d);
  for (let i = 0; i < 200 && b - a > 1e-13; i++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - r * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + r * (b - a);
      fd = f(d);
    }
  }
  return Math.min(fc, fd, f(lo), f(hi));
}

describe('entanglement-based BB84 (Shor & Preskill, PRL 85, 441, 2000)', () => {
  for (const q of [0, 0.01, 0.05, 0.11]) {
    it(`von Neumann bound at Q = ${q} lies in [1 − h(Q) − 2·gap, 1 − h(Q)]`, () => {
      const problem = example('bb84-entangled', { 'qber-z': q, 'qber-x': q });
      const result = solve(problem, { kind: 'von-neumann' }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      const exact = 1 - binaryEntropy(q);
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(exact + 1e-12);
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(exact - 2 * GAP);
      if (q === 0) expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(1 - 1e-5); // rank-one optimum |Φ+⟩
      expectVerified(problem, 'von-neumann', undefined, result);
    });
  }

  it('the one-way rate 1 − 2h(Q) changes sign at Q ≈ 11.0 %', () => {
    const rate = (q: number, bound: 'certifiedLowerBound' | 'upperBound') => {
      const r = solve(example('bb84-entangled', { 'qber-z': q, 'qber-x': q }), { kind: 'von-neumann' });
      return r[bound]! - binaryEntropy(q);
    };
    expect(rate(0.109, 'certifiedLowerBound')).toBeGreaterThan(0);
    expect(rate(0.111, 'upperBound')).toBeLessThan(0);
  });

  for (const kind of ['petz-up', 'petz-down', 'sandwiched-up'] as const) {
    it(`${kind} at α = 1.5 matches a one-dimensional search over Bell-diagonal states (docs/checks.md: twirling symmetry)`, () => {
      const [qz, qx] = [0.03, 0.07];
      const problem = example('bb84-entangled', { 'qber-z': qz, 'qber-x': qx });
      const objective = createObjective(problem, { kind, alpha: 1.5 });
      // Weights (Φ+, Φ−, Ψ+, Ψ−): Z errors on Ψ±, X errors on Φ−, Ψ−; one free parameter d = weight of Ψ−.
      const along = (d: number) => objective.evaluate(bellDiagonal([1 - qz - qx + d, qx - d, qz - d, d])).value;
      const lineMinimum = goldenMinimum(along, 0, Math.min(qz, qx));
      const result = solve(problem, { kind, alpha: 1.5 }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(lineMinimum + 1e-10);
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(lineMinimum - GAP);
      expectVerified(problem, kind, 1.5, result);
    });
  }
});

describe('six-state (Bruß 1998; Lo, QIC 1, 81, 2001)', () => {
  it('the constraints fix the Bell-diagonal state (1 − 3Q/2, Q/2, Q/2, Q/2)', () => {
    const q = 0.06;
    const problem = example('six-state', { qber: q });
    for (const [kind, alpha] of [['von-neumann', undefined], ['sandwiched-up', 1.4]] as const) {
      const exact = createObjective(problem, { kind, alpha }).evaluate(bellDiagonal([1 - 1.5 * q, q / 2, q / 2, q / 2])).value;
      const result = solve(problem, { kind, alpha }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(exact + 1e-10);
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(exact - GAP);
      expectVerified(problem, kind, alpha, result);
    }
  });

  it('H(Z|E) − h(Q) changes sign near Q ≈ 12.6 %', () => {
    const at = (q: number) => solve(example('six-state', { qber: q }), { kind: 'von-neumann' });
    expect(at(0.125).certifiedLowerBound! - binaryEntropy(0.125)).toBeGreaterThan(0);
    expect(at(0.128).upperBound! - binaryEntropy(0.128)).toBeLessThan(0);
  });
});

describe('trusted-measurement CHSH test (Acín et al. 2007; Pironio et al. 2009; Tsirelson 1980)', () => {
  for (const w of [0.8, 0.85]) {
    it(`win probability ${w}: a valid bound between the device-independent bound and 1`, () => {
      const problem = example('chsh-tested', { 'win-probability': w });
      const result = solve(problem, { kind: 'von-neumann' }, { gapTolerance: GAP });
      // The optimum is rank two (eigenvalues far below 1e-9): certified through lifted-spectrum neighbours.
      expect(result.status).toBe('CERTIFIED');
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(deviceIndependentBound(w));
      expect(result.upperBound!).toBeLessThanOrEqual(1);
      expectVerified(problem, 'von-neumann', undefined, result);
    });
  }

  it('a win probability above cos²(π/8) ≈ 0.8536 is INFEASIBLE with a Farkas certificate', () => {
    const result = solve(example('chsh-tested', { 'win-probability': 0.9 }), { kind: 'von-neumann' });
    expect(result.status).toBe('INFEASIBLE');
    expect(result.certifiedLowerBound).toBeNull();
    expect(result.infeasibility!.violation).toBeGreaterThan(0);
    expect(result.infeasibility!.dominantConstraints.length).toBeGreaterThan(0);
  });
});

describe('single-photon prepare-and-measure BB84 with loss (common practice: loss acts as erasure)', () => {
  for (const [eta, pz, q] of [
    [1, 0.5, 0.02],
    [0.1, 0.5, 0.02],
    [0.3, 0.8, 0.04],
    [0.2, 0.9, 0], // zero error rate: several table entries vanish and pin ρ to a smaller face
  ]) {
    it(`η = ${eta}, p_Z = ${pz}, q = ${q}: von Neumann value p_Z²·η·(1 − h(q)) within the gap`, () => {
      const problem = example('bb84-prepare-measure', { qber: q, transmittance: eta, 'z-basis-probability': pz });
      const result = solve(problem, { kind: 'von-neumann' }, { gapTolerance: GAP });
      expect(result.status).toBe('CERTIFIED');
      const expected = pz * pz * eta * (1 - binaryEntropy(q));
      expect(result.certifiedLowerBound!).toBeLessThanOrEqual(expected + 1e-9);
      expect(result.certifiedLowerBound!).toBeGreaterThanOrEqual(expected - GAP);
      expect(result.maxConstraintViolation!).toBeLessThan(1e-12);
      expectVerified(problem, 'von-neumann', undefined, result);
    });
  }
});

describe('limits are results', () => {
  const problem = example('bb84-entangled', { 'qber-z': 0.02, 'qber-x': 0.09 });

  it('an iteration limit returns LIMIT_REACHED with a bound that verifies', () => {
    const result = solve(problem, { kind: 'sandwiched-up', alpha: 1.2 }, { gapTolerance: 1e-12, maxIterations: 1 });
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('iterations');
    expect(result.certifiedLowerBound!).toBeLessThanOrEqual(result.upperBound!);
    expectVerified(problem, 'sandwiched-up', 1.2, result);
  });

  it('a cancellation flag raised during the iterations stops the run with LIMIT_REACHED/cancelled and a valid bound', () => {
    // Count the polls of a full run, then raise the flag halfway through them.
    let total = 0;
    solve(problem, { kind: 'petz-up', alpha: 1.5 }, { gapTolerance: 1e-12, maxIterations: 60 }, { isCancelled: () => (total++, false) });
    let polls = 0;
    const result = solve(
      problem,
      { kind: 'petz-up', alpha: 1.5 },
      { gapTolerance: 1e-12, maxIterations: 60 },
      { isCancelled: () => ++polls > total / 2 },
    );
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('cancelled');
    const report = verifyResult(problem, { kind: 'petz-up', alpha: 1.5 }, result);
    expect(report.reason).toMatch(/verified/);
    expect(report.valid).toBe(true);
  });

  it('a request cancelled before set-up ends with the trivial bound only (0: a classical key has non-negative entropy)', () => {
    const result = solve(problem, { kind: 'petz-up', alpha: 1.5 }, {}, { isCancelled: () => true });
    expect(result.status).toBe('LIMIT_REACHED');
    expect(result.limit).toBe('cancelled');
    expect(result.certifiedLowerBound).toBe(0);
    expect(result.trivialBoundUsed).toBe(true);
    expect(result.certificate).toBeNull();
    expect(verifyResult(problem, { kind: 'petz-up', alpha: 1.5 }, result).valid).toBe(true);
  });

  it('a warm start from a previous solution certifies 1 − h(Q_X) again (Shor & Preskill 2000: the phase error sets the rate)', () => {
    const cold = solve(problem, { kind: 'von-neumann' });
    const warm = solve(problem, { kind: 'von-neumann' }, {}, { warmStart: matrixFromJson(cold.finalState, 'finalState') });
    expect(warm.status).toBe('CERTIFIED');
    const exact = 1 - binaryEntropy(0.09);
    expect(warm.certifiedLowerBound!).toBeLessThanOrEqual(exact + 1e-12);
    expect(warm.certifiedLowerBound!).toBeGreaterThanOrEqual(exact - GAP);
  });

  it('a warm start is used (an exact feasibility test on Tr ρ = 1 used to drop every one): CHSH certifies sooner', () => {
    // The tested model is more constrained than the device-independent one, so its minimum lies above the
    // device-independent CHSH bound (Acín et al. 2007, helpers.ts); cold: 4 iterations, warm: 3.
    const chsh = example('chsh-tested', { 'win-probability': 0.85 });
    const cold = solve(chsh, { kind: 'von-neumann' });
    const warm = solve(chsh, { kind: 'von-neumann' }, {}, { warmStart: matrixFromJson(cold.finalState, 'finalState') });
    expect(warm.status).toBe('CERTIFIED');
    expect(warm.iterations).toBeLessThan(cold.iterations);
    expect(warm.certifiedLowerBound!).toBeGreaterThanOrEqual(deviceIndependentBound(0.85));
    expect(Math.abs(warm.certifiedLowerBound! - cold.certifiedLowerBound!)).toBeLessThanOrEqual(2e-6);
    expect(verifyResult(chsh, { kind: 'von-neumann' }, warm).valid).toBe(true);
  });
});
