// Newton steps along the central path (docs/convergence.md, "The central path"): the end point against the
// published BB84 minimum 1 − h(Q) (Shor & Preskill, PRL 85, 441, 2000), with equalities and with interval error
// rates; the path's gap bound μ·ν (Boyd & Vandenberghe, Convex Optimization, 2004, §11.2.2; from memory) against
// λ_min of the gradient from mathjs; the tangent basis against ml-matrix's SVD rank; and the random suite's d16#5,
// which Frank–Wolfe alone cannot certify within its iteration cap, against the definition of the minimum (a bound
// below F at the generating state) and the independent verifier.
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { barrierParameter, followCentralPath, nullSpace } from '../../src/frank-wolfe/central-path.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import type { Problem } from '../../src/problem/model.js';
import { bellDiagonal, binaryEntropy } from '../objectives/fixtures.js';
import { seededRandom } from '../helpers/random.js';
import { referenceEigenvalues, traceOfProduct } from '../oracle/reference.js';
import { example } from './helpers.js';

const Q = 0.05;
const SHOR_PRESKILL = 1 - binaryEntropy(Q);
/** Options of the runs below: from μ = 1e-2 to 1e-10, three Newton steps per weight. */
const PATH = { startWeight: 1e-2, endWeight: 1e-10, reduction: 0.1, stepsPerWeight: 3, maxTangentDimension: 256, maxHessianFreeDimension: 0 };

function run(problem: Problem, start: ComplexMatrix) {
  const objective = createObjective(problem, { kind: 'von-neumann' });
  const evaluate = (x: ComplexMatrix) => {
    const e = objective.evaluate(x, { assumeFullRank: true });
    return e.gradient ? { value: e.value, gradient: e.gradient } : null;
  };
  const accepted: number[] = [];
  const outcome = followCentralPath(start, evaluate(start)!, problem.constraints, evaluate, PATH, (_, e) => accepted.push(e.value));
  return { outcome, accepted, evaluate };
}

describe('the central path on entangled BB84', () => {
  it('with both error rates fixed at Q = 5 %: ends within μ·ν of 1 − h(Q), on the equalities, positive definite', () => {
    const problem = example('bb84-entangled', { 'qber-z': Q, 'qber-x': Q });
    // Bell-diagonal with both error rates 5 % (feasible, full rank) but not the optimum (1−Q)², Q(1−Q), Q(1−Q), Q².
    const start = bellDiagonal([0.91, 0.04, 0.04, 0.01]);
    const { outcome, accepted } = run(problem, start);
    expect(outcome).not.toBeNull();
    const nu = barrierParameter(4, problem.constraints);
    expect(nu).toBe(4);
    // A feasible state's F is at least the minimum; the centred point is within μ·ν (plus Newton's residual).
    expect(outcome!.evaluation.value).toBeGreaterThanOrEqual(SHOR_PRESKILL - 1e-12);
    expect(outcome!.evaluation.value - SHOR_PRESKILL).toBeLessThan(10 * nu * outcome!.weight + 1e-9);
    expect(accepted.length).toBe(outcome!.centrings);
    for (const c of problem.constraints) expect(Math.abs(traceOfProduct(c.operator, outcome!.point) - c.lower)).toBeLessThan(1e-12);
    expect(referenceEigenvalues(outcome!.point)[0]).toBeGreaterThan(0);
  });

  it('at a centred point the Frank–Wolfe gap ⟨∇F, ρ⟩ − λ_min(∇F − Σ yΓ) is at most μ·ν (equality-free: trace only)', () => {
    // Only Tr ρ = 1: the linear minimum over states is λ_min(∇F) (mathjs eigenvalues), no multipliers needed.
    const base = example('bb84-entangled', { 'qber-z': Q, 'qber-x': Q });
    const problem: Problem = { ...base, constraints: [] };
    const start = bellDiagonal([0.4, 0.3, 0.2, 0.1]);
    const objective = createObjective(problem, { kind: 'von-neumann' });
    const evaluate = (x: ComplexMatrix) => {
      const e = objective.evaluate(x, { assumeFullRank: true });
      return { value: e.value, gradient: e.gradient! };
    };
    // One weight, centred from a far start: the frame's Hessian is reused between refreshes, so Newton converges only
    // linearly there and needs more steps than on the path (40; 12 leave a gap of 0.03).
    const options = { ...PATH, startWeight: 1e-3, endWeight: 1e-3 };
    const outcome = followCentralPath(start, evaluate(start), [], evaluate, { ...options, stepsPerWeight: 40 }, () => {})!;
    const g = outcome.evaluation.gradient;
    const gap = traceOfProduct(g, outcome.point) - referenceEigenvalues(g)[0];
    expect(gap).toBeGreaterThan(0);
    expect(gap).toBeLessThanOrEqual(4 * 1e-3 * (1 + 1e-6));
    // Unconstrained, the minimum of H(Z|E) is 0 (a Z eigenstate makes the key deterministic; common practice), and
    // F ≥ 0 always: the centred point is within μ·ν of it.
    expect(outcome.evaluation.value).toBeGreaterThanOrEqual(0);
    expect(outcome.evaluation.value).toBeLessThanOrEqual(4 * 1e-3 + 1e-9);
  });

  it('with error rates in [Q − 1 %, Q]: reaches 1 − h(Q) at the upper ends, strictly inside both intervals', () => {
    const base = example('bb84-entangled', { 'qber-z': Q, 'qber-x': Q });
    const problem: Problem = { ...base, constraints: base.constraints.map((c) => ({ ...c, lower: Q - 0.01, upper: Q })) };
    const start = bellDiagonal([1 - 0.09 + 0.01, 0.035, 0.035, 0.01]);
    const { outcome } = run(problem, start);
    expect(outcome).not.toBeNull();
    expect(barrierParameter(4, problem.constraints)).toBe(8);
    expect(outcome!.evaluation.value).toBeGreaterThanOrEqual(SHOR_PRESKILL - 1e-12);
    expect(outcome!.evaluation.value - SHOR_PRESKILL).toBeLessThan(10 * 8 * outcome!.weight + 1e-9);
    for (const c of problem.constraints) {
      const v = traceOfProduct(c.operator, outcome!.point);
      expect(v).toBeLessThan(Q);
      expect(v).toBeGreaterThan(Q - 0.01);
    }
  });
});

describe('random-suite d16#5: an optimum whose eigenvalues taper without a rank gap', () => {
  it('von Neumann: certified at gap 1e-6 within 60 iterations, verified, below F at the generating state', () => {
    // Frank–Wolfe alone was at a gap of 2.8e-3 after 600 iterations (docs/convergence.md, "The central path"); the
    // cap is counted, not timed, so the check does not depend on the machine's speed.
    const model = randomModel(16, 5);
    const request = { kind: 'von-neumann' } as const;
    const result = solve(model.problem, request, { gapTolerance: 1e-6, maxIterations: 60, timeLimitMs: 120000 });
    expect(result.status).toBe('CERTIFIED');
    expect(verifyResult(model.problem, request, result).valid).toBe(true);
    expect(result.certifiedLowerBound!).toBeLessThanOrEqual(createObjective(model.problem, request).evaluate(model.truth).value);
  });
});

describe('nullSpace', () => {
  it('is orthonormal, orthogonal to every row, of dimension m − rank (rank from ml-matrix SVD), with dependent rows', () => {
    const rng = seededRandom(5);
    const m = 25;
    const independent = Array.from({ length: 6 }, () => Float64Array.from({ length: m }, () => rng() - 0.5));
    // Two dependent rows: a sum and a multiple of earlier ones.
    const rows = [...independent, Float64Array.from(independent[0], (v, i) => v + independent[3][i]), Float64Array.from(independent[2], (v) => 3 * v)];
    const basis = nullSpace(rows, m);
    const rank = new SingularValueDecomposition(new Matrix(rows.map((r) => Array.from(r))), { autoTranspose: true }).rank;
    expect(rank).toBe(6);
    expect(basis.length).toBe(m - rank);
    const dot = (a: Float64Array, b: Float64Array) => a.reduce((s, v, i) => s + v * b[i], 0);
    for (const v of basis) for (const r of rows) expect(Math.abs(dot(v, r))).toBeLessThan(1e-13);
    basis.forEach((a, i) => basis.forEach((b, j) => expect(Math.abs(dot(a, b) - (i === j ? 1 : 0))).toBeLessThan(1e-13)));
  });
});
