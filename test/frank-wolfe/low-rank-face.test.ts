// Optima of low rank with more tangent coordinates than the central path once took: on an exposed face, and on the
// whole space of d = 32 (docs/convergence.md, "The central path": centred points as certification neighbours; "Where the conditioning
// reaches the bound": the closed-form charge). References: F at the generating state (the minimum is at most that)
// and the independent verifier.
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { createObjective } from '../../src/objectives/index.js';

describe('d = 32 model pinned to an 18-dimensional face (266 tangent coordinates for the central path)', () => {
  // The random suite's generator with the face trait forced: rank-18 generating state, full POVM tables, source
  // marginal, one branch. Before the central path took 400 coordinates: gap 2.7e-6 after 1259 iterations (30 s).
  const model = randomModel(32, 3, { face: true, truthRank: 18, table: 'full', intervals: false, branches: 1, keylessBranch: false, sourceMarginal: true });
  const request = { kind: 'von-neumann' } as const;

  it('von Neumann: CERTIFIED at gap 1e-6 within 30 iterations, verified, below F at the generating state', () => {
    // An iteration budget (not time) keeps the test independent of the machine's speed; 120 s is only a backstop.
    const result = solve(model.problem, request, { gapTolerance: 1e-6, maxIterations: 30, timeLimitMs: 120000 });
    expect(result.status).toBe('CERTIFIED');
    expect(result.gap as number).toBeLessThanOrEqual(1e-6);
    expect(result.certificate?.faceExposures).toBeDefined();
    const report = verifyResult(model.problem, request, result);
    expect(report.valid, report.reason).toBe(true);
    const atTruth = createObjective(model.problem, request).evaluate(model.truth).value;
    expect(result.certifiedLowerBound as number).toBeLessThanOrEqual(atTruth);
  }, 180_000); // about 5 s idle; the face's central path takes a few thousand evaluations at n = 18
});

describe('d32#3 of the random suite (about 1000 tangent coordinates, a minimum just above the trivial bound)', () => {
  // Three scored branches, partial tables, equalities; Frank–Wolfe alone ended at 4.3e-3 after 30 s and the formed
  // Hessians (1000 evaluations each) reached 2.1e-3: the Hessian-free central path certifies it.
  const model = randomModel(32, 3);
  const request = { kind: 'von-neumann' } as const;

  it('von Neumann: CERTIFIED at gap 1e-6 within 30 iterations, verified, below F at the generating state', () => {
    const result = solve(model.problem, request, { gapTolerance: 1e-6, maxIterations: 30, timeLimitMs: 120000 });
    expect(result.status).toBe('CERTIFIED');
    expect(result.gap as number).toBeLessThanOrEqual(1e-6);
    const report = verifyResult(model.problem, request, result);
    expect(report.valid, report.reason).toBe(true);
    const atTruth = createObjective(model.problem, request).evaluate(model.truth).value;
    expect(result.certifiedLowerBound as number).toBeLessThanOrEqual(atTruth);
  }, 180_000); // about 7 s idle
});

