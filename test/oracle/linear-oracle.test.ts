import { describe, expect, it } from 'vitest';
import { ComplexMatrix, scale } from '../../src/linear-algebra/complex-matrix.js';
import { LinearOracle, type OracleConstraint, type OracleResult } from '../../src/oracle/index.js';
import { randomDensity, randomHermitian, seededRandom, type RandomSource } from '../helpers/random.js';
import {
  chshWinOperator,
  referenceDualBound,
  referenceEigenvalues,
  referenceFarkasViolation,
  solveLinearProgramByVertices,
  traceOfProduct,
  type LinearRow,
} from './reference.js';

/** Constraint slack the returned points may show (the oracle's primal tolerance is 1e-10 on unit-norm rows). */
const FEASIBILITY_SLACK = 1e-9;

/** σ ⪰ 0 (mathjs eigenvalues), Tr σ = 1 and every constraint within FEASIBILITY_SLACK. */
function expectFeasible(point: ComplexMatrix | null, constraints: OracleConstraint[]): void {
  expect(point).not.toBeNull();
  const sigma = point as ComplexMatrix;
  let trace = 0;
  for (let i = 0; i < sigma.rows; i++) trace += sigma.re[i * sigma.rows + i];
  expect(Math.abs(trace - 1)).toBeLessThan(1e-12);
  expect(referenceEigenvalues(sigma)[0]).toBeGreaterThan(-1e-12);
  for (const c of constraints) {
    const value = traceOfProduct(c.operator, sigma);
    expect(value).toBeGreaterThanOrEqual(c.lower - FEASIBILITY_SLACK * (1 + Math.abs(c.lower)));
    expect(value).toBeLessThanOrEqual(c.upper + FEASIBILITY_SLACK * (1 + Math.abs(c.upper)));
  }
}

/** Requested gap (primal − dual) ≤ relativeAccuracy·(1 + |primal|), and the dual bound recomputed with mathjs. */
function expectCertifiedGap(result: OracleResult, G: ComplexMatrix, constraints: OracleConstraint[], relativeAccuracy = 1e-7): void {
  expect(result.status).toBe('OPTIMAL');
  expect(result.primalValue - result.dualBound).toBeLessThanOrEqual(relativeAccuracy * (1 + Math.abs(result.primalValue)));
  for (let i = 0; i < constraints.length; i++) {
    expect(result.multipliersLower[i]).toBeGreaterThanOrEqual(0);
    expect(result.multipliersUpper[i]).toBeGreaterThanOrEqual(0);
  }
  const independent = referenceDualBound(G, constraints, result.multipliersLower, result.multipliersUpper);
  expect(Math.abs(independent - result.dualBound)).toBeLessThan(1e-11 * (1 + Math.abs(independent)));
}

function diagonalHermitian(diagonal: number[], rng: RandomSource, offDiagonal = 0): ComplexMatrix {
  const n = diagonal.length;
  const h = offDiagonal === 0 ? new ComplexMatrix(n, n) : scale(randomHermitian(n, rng), offDiagonal);
  for (let i = 0; i < n; i++) {
    h.re[i * n + i] = diagonal[i];
    h.im[i * n + i] = 0;
  }
  return h;
}

describe('LinearOracle: no constraints', () => {
  it.each([1, 2, 3, 5, 8, 16])('min ⟨G, σ⟩ over density operators is λ_min(G) (d=%i)', (d) => {
    const rng = seededRandom(100 + d);
    const G = randomHermitian(d, rng);
    const result = new LinearOracle(d, []).minimize(G);
    // Reference: Rayleigh–Ritz, min over density operators of ⟨G, σ⟩ = λ_min(G) (common practice), mathjs eigs.
    const lambdaMin = referenceEigenvalues(G)[0];
    expectCertifiedGap(result, G, []);
    expect(result.dualBound).toBeLessThanOrEqual(lambdaMin + 1e-12);
    expect(result.primalValue).toBeGreaterThanOrEqual(lambdaMin - 1e-12);
    expect(result.primalValue - lambdaMin).toBeLessThan(1e-7 * (1 + Math.abs(lambdaMin)));
    expectFeasible(result.point, []);
  });

  it('a multiple of the identity: every state is optimal, bound exact', () => {
    const G = scale(ComplexMatrix.identity(3), 2.5);
    const result = new LinearOracle(3, []).minimize(G);
    expect(result.status).toBe('OPTIMAL');
    expect(Math.abs(result.primalValue - 2.5)).toBeLessThan(1e-14);
    expect(Math.abs(result.dualBound - 2.5)).toBeLessThan(1e-14);
  });

  it('scale invariance: a tiny gradient is resolved as well as a unit one', () => {
    const rng = seededRandom(7);
    const G = scale(randomHermitian(6, rng), 1e-9);
    const result = new LinearOracle(6, []).minimize(G);
    const lambdaMin = referenceEigenvalues(G)[0];
    expect(result.status).toBe('OPTIMAL');
    expect(result.primalValue - lambdaMin).toBeLessThan(1e-7 * 1e-9 * 10);
    expect(result.dualBound).toBeLessThanOrEqual(lambdaMin + 1e-22);
  });
});

describe('LinearOracle: diagonal data is a linear program', () => {
  // With diagonal G and Γ_i, ⟨G, σ⟩ and Tr(Γ_i σ) depend on diag σ only, which ranges over the probability simplex
  // (common practice); the reference solves that LP by vertex enumeration (ml-matrix SVD), independent of the oracle.
  it.each([
    [3, 2, 1],
    [4, 3, 2],
    [4, 2, 3],
    [5, 3, 4],
    [3, 3, 5],
  ])('d=%i with %i constraints (seed %i)', (d, count, seed) => {
    const rng = seededRandom(200 + seed);
    const p0 = Array.from({ length: d }, () => 0.2 + rng());
    const total = p0.reduce((s, x) => s + x, 0);
    for (let j = 0; j < d; j++) p0[j] /= total;
    const rows: LinearRow[] = [];
    const constraints: OracleConstraint[] = [];
    for (let i = 0; i < count; i++) {
      const a = Array.from({ length: d }, () => 2 * rng() - 1);
      const value = a.reduce((s, x, j) => s + x * p0[j], 0);
      // Mix equalities, two-sided and one-sided intervals.
      const kind = (i + seed) % 4;
      const lower = kind === 0 ? value : kind === 3 ? -Infinity : value - 0.05 * rng();
      const upper = kind === 0 ? value : kind === 2 ? Infinity : value + 0.05 * rng();
      rows.push({ coefficients: a, lower, upper });
      // Off-diagonal parts of Γ would couple to coherences; keep them zero so the problem stays an LP.
      constraints.push({ label: `row${i}`, operator: diagonalHermitian(a, rng), lower, upper });
    }
    const c = Array.from({ length: d }, () => 2 * rng() - 1);
    // G may carry coherences: they do not change the optimum, since diagonal states are feasible and optimal.
    const G = diagonalHermitian(c, rng);
    const reference = solveLinearProgramByVertices(c, rows);
    expect(Number.isFinite(reference.value)).toBe(true);
    const result = new LinearOracle(d, constraints).minimize(G);
    expectCertifiedGap(result, G, constraints);
    expect(result.dualBound).toBeLessThanOrEqual(reference.value + 1e-9);
    expect(result.primalValue).toBeGreaterThanOrEqual(reference.value - 1e-9);
    expect(Math.abs(result.primalValue - reference.value)).toBeLessThan(2e-7);
    expectFeasible(result.point, constraints);
  });

  it('infeasible LP: the certificate verifies with mathjs', () => {
    const rng = seededRandom(300);
    // p_0 + p_1 ≥ 0.7 and p_1 + p_2 ≥ 0.7 and p_0 + p_2 ≥ 0.7 force Σ p ≥ 1.05 > 1.
    const constraints: OracleConstraint[] = [
      { label: 'pair01', operator: diagonalHermitian([1, 1, 0], rng), lower: 0.7, upper: Infinity },
      { label: 'pair12', operator: diagonalHermitian([0, 1, 1], rng), lower: 0.7, upper: Infinity },
      { label: 'pair02', operator: diagonalHermitian([1, 0, 1], rng), lower: 0.7, upper: Infinity },
    ];
    expect(solveLinearProgramByVertices([0, 0, 0], constraints.map((c) => ({ coefficients: [c.operator.re[0], c.operator.re[4], c.operator.re[8]], lower: c.lower, upper: c.upper }))).value).toBe(Infinity);
    const oracle = new LinearOracle(3, constraints);
    const result = oracle.findFeasiblePoint();
    expect(result.status).toBe('INFEASIBLE');
    expect(result.point).toBeNull();
    const certificate = result.infeasibility!;
    expect(certificate.violation).toBeGreaterThan(0);
    const sum = certificate.multipliersLower.reduce((s, x) => s + x, 0) + certificate.multipliersUpper.reduce((s, x) => s + x, 0);
    expect(Math.abs(sum - 1)).toBeLessThan(1e-12);
    const independent = referenceFarkasViolation(constraints, certificate.multipliersLower, certificate.multipliersUpper);
    expect(Math.abs(independent - certificate.violation)).toBeLessThan(1e-12);
    expect(certificate.dominantConstraints.sort()).toEqual(['pair01', 'pair02', 'pair12']);
    // minimize() reports the same, without a point.
    const again = oracle.minimize(diagonalHermitian([1, 2, 3], rng));
    expect(again.status).toBe('INFEASIBLE');
    expect(again.infeasibility!.violation).toBeGreaterThan(0);
  });
});

describe('LinearOracle: random linear programs on a grid (many degenerate and infeasible)', () => {
  // Coefficients and bounds on a coarse grid make touching bounds, single-point feasible sets and empty sets common.
  // Reference: vertex enumeration (ml-matrix SVD); infeasibility certificates re-verified with mathjs eigenvalues.
  it('80 seeded instances: feasibility, optimum and certificates agree with the reference', () => {
    let infeasibleCount = 0;
    for (let seed = 0; seed < 80; seed++) {
      const rng = seededRandom(1000 + seed);
      const d = 2 + Math.floor(rng() * 3);
      const count = 1 + Math.floor(rng() * 4);
      const rows: LinearRow[] = [];
      const constraints: OracleConstraint[] = [];
      for (let i = 0; i < count; i++) {
        const a = Array.from({ length: d }, () => Math.round((2 * rng() - 1) * 4) / 4);
        const kind = Math.floor(rng() * 4);
        const c = Math.round((2 * rng() - 1) * 8) / 16;
        const lower = kind === 1 ? -Infinity : c;
        const upper = kind === 0 ? c : kind === 2 ? Infinity : c + Math.round(rng() * 4) / 8;
        rows.push({ coefficients: a, lower, upper });
        constraints.push({ label: `row${i}`, operator: ComplexMatrix.diagonal(a), lower, upper });
      }
      const c = Array.from({ length: d }, () => 2 * rng() - 1);
      const reference = solveLinearProgramByVertices(c, rows);
      const result = new LinearOracle(d, constraints).minimize(ComplexMatrix.diagonal(c));
      if (reference.value === Infinity) {
        infeasibleCount++;
        expect(result.status, `seed ${seed}`).toBe('INFEASIBLE');
        const certificate = result.infeasibility!;
        expect(referenceFarkasViolation(constraints, certificate.multipliersLower, certificate.multipliersUpper), `seed ${seed}`).toBeGreaterThan(0);
      } else {
        expect(result.status, `seed ${seed}`).not.toBe('INFEASIBLE');
        expect(result.dualBound, `seed ${seed}`).toBeLessThanOrEqual(reference.value + 1e-9);
        expect(Math.abs(result.primalValue - reference.value), `seed ${seed}`).toBeLessThan(1e-6);
      }
    }
    expect(infeasibleCount).toBeGreaterThan(10);
  });
});

describe('LinearOracle: weak duality', () => {
  it('the bound (★) never exceeds ⟨G, σ⟩ at feasible points, for optimal and for arbitrary multipliers', () => {
    const rng = seededRandom(400);
    const d = 6;
    const rho = randomDensity(d, rng);
    const constraints: OracleConstraint[] = [];
    for (let i = 0; i < 8; i++) {
      const operator = randomHermitian(d, rng);
      const value = traceOfProduct(operator, rho);
      constraints.push(
        i % 2 === 0
          ? { label: `eq${i}`, operator, lower: value, upper: value }
          : { label: `in${i}`, operator, lower: value - 0.1, upper: value + 0.1 },
      );
    }
    const oracle = new LinearOracle(d, constraints);
    const feasible = oracle.findFeasiblePoint();
    expect(feasible.status).toBe('OPTIMAL');
    expectFeasible(feasible.point, constraints);
    for (let trial = 0; trial < 5; trial++) {
      const G = randomHermitian(d, rng);
      const result = oracle.minimize(G);
      expectCertifiedGap(result, G, constraints);
      expectFeasible(result.point, constraints);
      // Feasible points to compare with: the analytic centre, the known state ρ, and the optimum itself.
      for (const sigma of [feasible.point as ComplexMatrix, rho, result.point as ComplexMatrix]) {
        expect(result.dualBound).toBeLessThanOrEqual(traceOfProduct(G, sigma) + 1e-9);
      }
      // Arbitrary nonnegative multipliers: still a lower bound (this is (★), checked with mathjs eigenvalues).
      const lower = Float64Array.from(constraints, () => rng() * 2);
      const upper = Float64Array.from(constraints, () => rng() * 2);
      const arbitrary = referenceDualBound(G, constraints, lower, upper);
      expect(Math.abs(oracle.dualBound(G, lower, upper) - arbitrary)).toBeLessThan(1e-10);
      for (const sigma of [feasible.point as ComplexMatrix, rho, result.point as ComplexMatrix]) {
        expect(arbitrary).toBeLessThanOrEqual(traceOfProduct(G, sigma) + 1e-8);
      }
    }
  });
});

describe('LinearOracle: larger sizes (odd and even, dense and sparse rows)', () => {
  it.each([
    [17, 12],
    [24, 20],
  ])('d=%i with %i constraints: feasible optimum, certified gap, bound below ⟨G, ρ⟩', (d, count) => {
    const rng = seededRandom(40 + d);
    const rho = randomDensity(d, rng);
    const constraints: OracleConstraint[] = [];
    for (let i = 0; i < count; i++) {
      // Alternate dense random operators with sparse ones (a single symmetric pair of entries).
      let operator = randomHermitian(d, rng);
      if (i % 2 === 1) {
        operator = new ComplexMatrix(d, d);
        const a = Math.floor(rng() * d);
        const b = Math.floor(rng() * d);
        operator.set(a, b, 1, a === b ? 0 : 0.5);
        operator.set(b, a, 1, a === b ? 0 : -0.5);
      }
      const value = traceOfProduct(operator, rho);
      constraints.push(
        i % 3 === 0
          ? { label: `eq${i}`, operator, lower: value, upper: value }
          : { label: `in${i}`, operator, lower: value - 0.01, upper: value + 0.01 },
      );
    }
    const G = randomHermitian(d, rng);
    const result = new LinearOracle(d, constraints).minimize(G);
    expectCertifiedGap(result, G, constraints);
    expectFeasible(result.point, constraints);
    // ρ is feasible, so (★) must stay below ⟨G, ρ⟩.
    expect(result.dualBound).toBeLessThanOrEqual(traceOfProduct(G, rho) + 1e-9);
  });
});

describe('LinearOracle: real data and the real embedding', () => {
  const realPart = (m: ComplexMatrix): ComplexMatrix => new ComplexMatrix(m.rows, m.cols, m.re.slice(), new Float64Array(m.re.length));
  /** [[Re A, −Im A], [Im A, Re A]]: the real symmetric embedding of a Hermitian A. */
  const embed = (a: ComplexMatrix): ComplexMatrix => {
    const n = a.rows;
    const out = new ComplexMatrix(2 * n, 2 * n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        out.re[i * 2 * n + j] = a.re[i * n + j];
        out.re[(i + n) * 2 * n + j + n] = a.re[i * n + j];
        out.re[i * 2 * n + j + n] = -a.im[i * n + j];
        out.re[(i + n) * 2 * n + j] = a.im[i * n + j];
      }
    }
    return out;
  };

  function randomProblem(d: number, count: number, rng: RandomSource, makeReal: boolean): { constraints: OracleConstraint[]; G: ComplexMatrix } {
    const shape = (m: ComplexMatrix): ComplexMatrix => (makeReal ? realPart(m) : m);
    const rho = shape(randomDensity(d, rng));
    const constraints: OracleConstraint[] = [];
    for (let i = 0; i < count; i++) {
      const operator = shape(randomHermitian(d, rng));
      const value = traceOfProduct(operator, rho);
      constraints.push(i % 3 === 0 ? { label: `eq${i}`, operator, lower: value, upper: value } : { label: `in${i}`, operator, lower: value - 0.02, upper: value + 0.02 });
    }
    return { constraints, G: shape(randomHermitian(d, rng)) };
  }

  it('real data (real arithmetic path) gives the same answer as the complex path', () => {
    const { constraints, G } = randomProblem(7, 9, seededRandom(51), true);
    const oracle = new LinearOracle(7, constraints);
    const real = oracle.minimize(G);
    // A 1e-300 imaginary part changes nothing numerically but sends the solve down the complex path.
    const nudged = G.clone();
    nudged.im[1] = 1e-300;
    nudged.im[7] = -1e-300;
    const complex = oracle.minimize(nudged);
    expectCertifiedGap(real, G, constraints);
    expect(complex.status).toBe('OPTIMAL');
    expect(Math.abs(real.primalValue - complex.primalValue)).toBeLessThan(1e-9);
    expect(Math.abs(real.dualBound - complex.dualBound)).toBeLessThan(1e-9);
  });

  it('answers do not depend on earlier calls (real and complex gradients interleaved)', () => {
    const rng = seededRandom(53);
    const { constraints, G } = randomProblem(6, 8, rng, true);
    const complexG = randomHermitian(6, rng);
    const oracle = new LinearOracle(6, constraints);
    const first = oracle.minimize(G);
    oracle.minimize(complexG);
    oracle.findFeasiblePoint();
    const again = oracle.minimize(G);
    expect(again.primalValue).toBe(first.primalValue);
    expect(again.dualBound).toBe(first.dualBound);
    expect(Array.from(again.point!.re)).toEqual(Array.from(first.point!.re));
    expect(Array.from(again.multipliersLower)).toEqual(Array.from(first.multipliersLower));
    // And a fresh oracle gives the same complex answer as the one that had solved real problems before.
    const fresh = new LinearOracle(6, constraints).minimize(complexG);
    const reused = oracle.minimize(complexG);
    expect(reused.primalValue).toBe(fresh.primalValue);
    expect(reused.dualBound).toBe(fresh.dualBound);
  });

  it('a complex problem and its real embedding have the same optimum', () => {
    // Reference identity (common practice): σ ↦ embed(σ)/2 maps complex density operators to real ones with the same
    // constraint values, and averaging a real feasible X with J·X·Jᵀ (J = [[0, −1], [1, 0]]) maps back, so the optima agree.
    const d = 5;
    const { constraints, G } = randomProblem(d, 6, seededRandom(52), false);
    const complex = new LinearOracle(d, constraints).minimize(G);
    const embedded = new LinearOracle(
      2 * d,
      constraints.map((c) => ({ ...c, operator: embed(c.operator) })),
    ).minimize(embed(G));
    expectCertifiedGap(complex, G, constraints);
    expect(embedded.status).toBe('OPTIMAL');
    expect(Math.abs(complex.primalValue - embedded.primalValue)).toBeLessThan(5e-7);
    expect(embedded.dualBound).toBeLessThanOrEqual(complex.primalValue + 1e-9);
    expect(complex.dualBound).toBeLessThanOrEqual(embedded.primalValue + 1e-9);
  });
});

describe('LinearOracle: CHSH and Tsirelson’s bound', () => {
  const W = chshWinOperator();
  const tsirelson = Math.cos(Math.PI / 8) ** 2; // Tsirelson 1980: max win probability cos²(π/8) ≈ 0.8536

  it('maximizing the win probability over two-qubit states gives cos²(π/8)', () => {
    const result = new LinearOracle(4, []).minimize(scale(W, -1));
    expect(result.status).toBe('OPTIMAL');
    expect(Math.abs(-result.primalValue - tsirelson)).toBeLessThan(1e-7);
    expect(-result.dualBound).toBeGreaterThanOrEqual(tsirelson - 1e-12);
  });

  it.each([0.75, 0.8, 0.85, 0.8535])('win probability ≥ %f is feasible: an interior point is returned', (w) => {
    const constraints: OracleConstraint[] = [{ label: 'chsh-win', operator: W, lower: w, upper: Infinity }];
    const oracle = new LinearOracle(4, constraints);
    const result = oracle.findFeasiblePoint();
    expect(result.status).toBe('OPTIMAL');
    expectFeasible(result.point, constraints);
    // Interior: strictly above the bound (the analytic centre stays away from it).
    expect(traceOfProduct(W, result.point!)).toBeGreaterThan(w);
    const G = randomHermitian(4, seededRandom(Math.round(w * 1e4)));
    const minimum = oracle.minimize(G);
    expectCertifiedGap(minimum, G, constraints);
    expectFeasible(minimum.point, constraints);
  });

  it.each([0.86, 0.9, 1])('win probability ≥ %f is infeasible, with a Farkas certificate', (w) => {
    const constraints: OracleConstraint[] = [{ label: 'chsh-win', operator: W, lower: w, upper: Infinity }];
    const oracle = new LinearOracle(4, constraints);
    const result = oracle.findFeasiblePoint();
    expect(result.status).toBe('INFEASIBLE');
    const certificate = result.infeasibility!;
    // With y⁺ = 1 the violation is w − λ_max(W) = w − cos²(π/8) exactly (docs/math.md §4).
    expect(certificate.multipliersLower[0]).toBeCloseTo(1, 12);
    expect(certificate.violation).toBeCloseTo(w - tsirelson, 10);
    expect(referenceFarkasViolation(constraints, certificate.multipliersLower, certificate.multipliersUpper)).toBeCloseTo(w - tsirelson, 10);
    expect(certificate.dominantConstraints).toEqual(['chsh-win']);
    expect(result.message).toContain('chsh-win');
    expect(oracle.minimize(randomHermitian(4, seededRandom(1))).status).toBe('INFEASIBLE');
  });

  it('win probability exactly at Tsirelson’s bound: a feasible set of one state, not called infeasible', () => {
    const constraints: OracleConstraint[] = [{ label: 'chsh-win', operator: W, lower: tsirelson, upper: Infinity }];
    const result = new LinearOracle(4, constraints).findFeasiblePoint();
    expect(result.status).not.toBe('INFEASIBLE');
    expect(result.status).toBe('OPTIMAL');
    expectFeasible(result.point, constraints);
  });
});

describe('LinearOracle: interval constraints fixed by the equalities', () => {
  it('an interval on an operator in the equality span is dropped when satisfied and certified when violated', () => {
    const rng = seededRandom(500);
    const d = 3;
    const rho = randomDensity(d, rng);
    const gamma = randomHermitian(d, rng);
    const value = traceOfProduct(gamma, rho);
    // 2Γ + 1 lies in span{1, Γ}: its value is fixed to 2·value + 1 on the feasible set.
    const combined = scale(gamma, 2);
    for (let i = 0; i < d; i++) combined.re[i * d + i] += 1;
    const satisfied: OracleConstraint[] = [
      { label: 'fixed', operator: gamma, lower: value, upper: value },
      { label: 'implied', operator: combined, lower: 2 * value + 0.5, upper: 2 * value + 1.5 },
    ];
    const G = randomHermitian(d, rng);
    const withImplied = new LinearOracle(d, satisfied).minimize(G);
    const without = new LinearOracle(d, satisfied.slice(0, 1)).minimize(G);
    expectCertifiedGap(withImplied, G, satisfied);
    expect(Math.abs(withImplied.primalValue - without.primalValue)).toBeLessThan(1e-7);
    const violated: OracleConstraint[] = [satisfied[0], { ...satisfied[1], lower: 2 * value + 1.2, upper: 2 * value + 2 }];
    const result = new LinearOracle(d, violated).minimize(G);
    expect(result.status).toBe('INFEASIBLE');
    const certificate = result.infeasibility!;
    expect(referenceFarkasViolation(violated, certificate.multipliersLower, certificate.multipliersUpper)).toBeGreaterThan(0);
    expect(certificate.dominantConstraints).toContain('implied');
  });
});
