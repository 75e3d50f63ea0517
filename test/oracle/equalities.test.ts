import { describe, expect, it } from 'vitest';
import {
  ComplexMatrix,
  add,
  kron,
  multiplyAdjointRight,
  partialTraceB,
  scale,
} from '../../src/linear-algebra/complex-matrix.js';
import { LinearOracle, type OracleConstraint } from '../../src/oracle/index.js';
import { randomComplexGaussian, randomDensity, randomHermitian, randomUnitary, seededRandom, type RandomSource } from '../helpers/random.js';
import { referenceDualBound, referenceEigenvalues, referenceFarkasViolation, traceOfProduct } from './reference.js';

/** Hermitian operator basis of 2×2 matrices: |0⟩⟨0|, |1⟩⟨1|, σ_x, σ_y (so the first two sum to the identity). */
const qubitBasis: ComplexMatrix[] = [
  ComplexMatrix.from([
    [1, 0],
    [0, 0],
  ]),
  ComplexMatrix.from([
    [0, 0],
    [0, 1],
  ]),
  ComplexMatrix.from([
    [0, 1],
    [1, 0],
  ]),
  ComplexMatrix.from([
    [0, [0, -1]],
    [[0, 1], 0],
  ]),
];

/** Source-marginal equalities Tr((B_k ⊗ 1)ρ) = Tr(B_k ρ_A) for the qubit basis (the source-replacement picture). */
function marginalConstraints(rhoA: ComplexMatrix, dB: number): OracleConstraint[] {
  return qubitBasis.map((b, k) => {
    const value = traceOfProduct(b, rhoA);
    return { label: `source-marginal-${k}`, operator: kron(b, ComplexMatrix.identity(dB)), lower: value, upper: value };
  });
}

/** A state on A⊗B with Alice's marginal exactly ρ_A = M·M†: a mixture of a rotated purification and ρ_A ⊗ ρ_B. */
function stateWithMarginal(m: ComplexMatrix, dB: number, rng: RandomSource): ComplexMatrix {
  const dA = m.rows;
  // |ψ⟩ = (M ⊗ 1) Σ_i |i⟩|i⟩ has Tr_B |ψ⟩⟨ψ| = M·M†; dB ≥ dA.
  const psi = new ComplexMatrix(dA * dB, 1);
  for (let a = 0; a < dA; a++) {
    for (let i = 0; i < dA; i++) {
      psi.re[a * dB + i] += m.re[a * dA + i];
      psi.im[a * dB + i] += m.im[a * dA + i];
    }
  }
  // (1 ⊗ U)|ψ⟩: a unitary on B leaves Alice's marginal unchanged.
  const rotated = kron(ComplexMatrix.identity(dA), randomUnitary(dB, rng));
  const psiRotated = new ComplexMatrix(dA * dB, 1);
  for (let r = 0; r < dA * dB; r++) {
    for (let c = 0; c < dA * dB; c++) {
      psiRotated.re[r] += rotated.re[r * dA * dB + c] * psi.re[c] - rotated.im[r * dA * dB + c] * psi.im[c];
      psiRotated.im[r] += rotated.re[r * dA * dB + c] * psi.im[c] + rotated.im[r * dA * dB + c] * psi.re[c];
    }
  }
  const pure = multiplyAdjointRight(psiRotated, psiRotated);
  const rhoA = multiplyAdjointRight(m, m);
  return add(scale(pure, 0.5), scale(kron(rhoA, randomDensity(dB, rng)), 0.5));
}

/** Joint-table constraints Tr((P_x ⊗ Q_y)ρ) = p(x, y) ± tolerance for a computational-basis P and a random basis Q. */
function tableConstraints(rho: ComplexMatrix, dB: number, rng: RandomSource, tolerance = 0): OracleConstraint[] {
  const u = randomUnitary(dB, rng);
  const out: OracleConstraint[] = [];
  for (let x = 0; x < 2; x++) {
    for (let y = 0; y < dB; y++) {
      const q = new ComplexMatrix(dB, dB);
      for (let i = 0; i < dB; i++) {
        for (let j = 0; j < dB; j++) {
          // Q_y = u_y u_y† with u_y the y-th column of the unitary.
          q.re[i * dB + j] = u.re[i * dB + y] * u.re[j * dB + y] + u.im[i * dB + y] * u.im[j * dB + y];
          q.im[i * dB + j] = u.im[i * dB + y] * u.re[j * dB + y] - u.re[i * dB + y] * u.im[j * dB + y];
        }
      }
      const operator = kron(qubitBasis[x], q);
      const value = traceOfProduct(operator, rho);
      out.push({ label: `table-${x}${y}`, operator, lower: value - tolerance, upper: value + tolerance });
    }
  }
  return out;
}

function randomMarginalFactor(rng: RandomSource): ComplexMatrix {
  const m = randomComplexGaussian(2, 2, rng);
  const norm = Math.sqrt(m.re.reduce((s, x) => s + x * x, 0) + m.im.reduce((s, x) => s + x * x, 0));
  return scale(m, 1 / norm);
}

describe('LinearOracle: redundant equalities (source marginal plus a joint table)', () => {
  it.each([2, 3])('a consistent table that also fixes Alice’s marginal solves (d_B=%i)', (dB) => {
    const rng = seededRandom(600 + dB);
    const m = randomMarginalFactor(rng);
    const rho = stateWithMarginal(m, dB, rng);
    const rhoA = multiplyAdjointRight(m, m);
    expect(Math.abs(partialTraceB(rho, 2, dB).re[1] - rhoA.re[1])).toBeLessThan(1e-14);
    const marginal = marginalConstraints(rhoA, dB);
    const table = tableConstraints(rho, dB, rng);
    const constraints = [...marginal, ...table];
    const oracle = new LinearOracle(2 * dB, constraints);
    const feasible = oracle.findFeasiblePoint();
    expect(feasible.status).toBe('OPTIMAL');
    const G = randomHermitian(2 * dB, rng);
    const result = oracle.minimize(G);
    expect(result.status).toBe('OPTIMAL');
    expect(result.primalValue - result.dualBound).toBeLessThanOrEqual(1e-7 * (1 + Math.abs(result.primalValue)));
    // The point satisfies every constraint, including the dropped (dependent) ones; Tr_B σ = ρ_A.
    const sigma = result.point!;
    for (const c of constraints) expect(Math.abs(traceOfProduct(c.operator, sigma) - c.lower)).toBeLessThan(1e-9);
    const reduced = partialTraceB(sigma, 2, dB);
    for (let t = 0; t < 4; t++) {
      expect(Math.abs(reduced.re[t] - rhoA.re[t])).toBeLessThan(1e-9);
      expect(Math.abs(reduced.im[t] - rhoA.im[t])).toBeLessThan(1e-9);
    }
    expect(referenceEigenvalues(sigma)[0]).toBeGreaterThan(-1e-12);
    // The redundant formulation has the same optimum as an irredundant one (off-diagonal marginal terms and the
    // table: the table fixes the diagonal marginal already), and ρ itself is feasible, so the optimum is below ⟨G, ρ⟩.
    const irredundant = new LinearOracle(2 * dB, [...marginal.slice(2), ...table]).minimize(G);
    expect(Math.abs(irredundant.primalValue - result.primalValue)).toBeLessThan(1e-7);
    expect(result.dualBound).toBeLessThanOrEqual(traceOfProduct(G, rho) + 1e-9);
  });

  it('a table inconsistent with the marginal is INFEASIBLE while preprocessing, with a verified certificate', () => {
    const rng = seededRandom(610);
    const dB = 2;
    const m = randomMarginalFactor(rng);
    const rho = stateWithMarginal(m, dB, rng);
    const rhoA = multiplyAdjointRight(m, m);
    const table = tableConstraints(rho, dB, rng);
    // Move 0.01 of probability from x=1 to x=0: the table now implies a different marginal for Alice.
    table[0] = { ...table[0], lower: table[0].lower + 0.01, upper: table[0].upper + 0.01 };
    table[2] = { ...table[2], lower: table[2].lower - 0.01, upper: table[2].upper - 0.01 };
    const constraints = [...marginalConstraints(rhoA, dB), ...table];
    const oracle = new LinearOracle(2 * dB, constraints);
    const result = oracle.findFeasiblePoint();
    expect(result.status).toBe('INFEASIBLE');
    expect(result.iterations).toBe(0);
    const certificate = result.infeasibility!;
    const independent = referenceFarkasViolation(constraints, certificate.multipliersLower, certificate.multipliersUpper);
    expect(independent).toBeGreaterThan(1e-4);
    expect(Math.abs(independent - certificate.violation)).toBeLessThan(1e-12);
    expect(certificate.dominantConstraints.some((label) => label.startsWith('table') || label.startsWith('source'))).toBe(true);
    expect(oracle.minimize(randomHermitian(4, rng)).status).toBe('INFEASIBLE');
  });

  it('a table with tolerances that cannot meet the marginal is INFEASIBLE from the interior-point run', () => {
    const rng = seededRandom(620);
    const dB = 2;
    const m = randomMarginalFactor(rng);
    const rho = stateWithMarginal(m, dB, rng);
    const rhoA = multiplyAdjointRight(m, m);
    const table = tableConstraints(rho, dB, rng, 0.002);
    for (const k of [0, 1]) table[k] = { ...table[k], lower: table[k].lower + 0.01, upper: table[k].upper + 0.01 };
    const constraints = [...marginalConstraints(rhoA, dB), ...table];
    const result = new LinearOracle(2 * dB, constraints).findFeasiblePoint();
    expect(result.status).toBe('INFEASIBLE');
    const certificate = result.infeasibility!;
    expect(referenceFarkasViolation(constraints, certificate.multipliersLower, certificate.multipliersUpper)).toBeGreaterThan(0);
    expect(certificate.violation).toBeGreaterThan(0);
  });
});

describe('LinearOracle: rank-deficient feasible set (pure source marginal)', () => {
  it('ρ_A = |0⟩⟨0| confines σ to |0⟩⟨0| ⊗ ρ_B: feasible point found, optimum is λ_min of the |0⟩ block', () => {
    const rng = seededRandom(700);
    const dB = 3;
    const rhoA = qubitBasis[0];
    const constraints = marginalConstraints(rhoA, dB);
    const oracle = new LinearOracle(2 * dB, constraints);
    const feasible = oracle.findFeasiblePoint();
    expect(feasible.status).toBe('OPTIMAL');
    const sigma = feasible.point!;
    expect(referenceEigenvalues(sigma)[0]).toBeGreaterThan(-1e-12);
    for (const c of constraints) expect(Math.abs(traceOfProduct(c.operator, sigma) - c.lower)).toBeLessThan(1e-9);
    // The analytic centre of {|0⟩⟨0| ⊗ τ} is τ = 1/d_B by unitary invariance (common practice).
    for (let i = 0; i < dB; i++) expect(Math.abs(sigma.re[i * 2 * dB + i] - 1 / dB)).toBeLessThan(1e-6);
  });

  it('ρ_A = |0⟩⟨0|: minimize reaches λ_min of the |0⟩ block on the face, with a valid full-space bound', () => {
    const rng = seededRandom(700);
    const dB = 3;
    const constraints = marginalConstraints(qubitBasis[0], dB);
    const oracle = new LinearOracle(2 * dB, constraints);
    const G = randomHermitian(2 * dB, rng);
    const result = oracle.minimize(G);
    // Reference: on σ = |0⟩⟨0| ⊗ τ, ⟨G, σ⟩ = ⟨G_00, τ⟩ with G_00 the top-left d_B×d_B block: minimum λ_min(G_00).
    const block = new ComplexMatrix(dB, dB);
    for (let i = 0; i < dB; i++) {
      for (let j = 0; j < dB; j++) block.set(i, j, G.re[i * 2 * dB + j], G.im[i * 2 * dB + j]);
    }
    const optimum = referenceEigenvalues(block)[0];
    expect(result.point).not.toBeNull();
    expect(result.message).toContain('face of dimension 3');
    // The point lies exactly on the face: no weight and no coherence outside |0⟩ ⊗ H_B.
    for (let i = dB; i < 2 * dB; i++) {
      for (let j = 0; j < 2 * dB; j++) expect(Math.hypot(result.point!.re[i * 2 * dB + j], result.point!.im[i * 2 * dB + j])).toBeLessThan(1e-12);
    }
    expect(result.primalValue).toBeGreaterThanOrEqual(optimum - 1e-12);
    expect(result.primalValue - optimum).toBeLessThan(1e-7 * (1 + Math.abs(optimum)));
    // (★) with finite multipliers cannot reach the optimum here (no strictly feasible point: the dual optimum is not
    // attained); the bound must stay valid, and the exposing multipliers bring it within ~1e-6.
    expect(result.dualBound).toBeLessThanOrEqual(optimum);
    expect(optimum - result.dualBound).toBeLessThan(1e-6);
    const independent = referenceDualBound(G, constraints, result.multipliersLower, result.multipliersUpper);
    expect(Math.abs(independent - result.dualBound)).toBeLessThan(1e-9);
    if (result.status === 'OPTIMAL') expect(result.primalValue - result.dualBound).toBeLessThanOrEqual(1e-7 * (1 + Math.abs(result.primalValue)));
    else expect(result.status).toBe('ITERATION_LIMIT');
  });
});

describe('LinearOracle: equalities that pin the state completely', () => {
  it.each([3, 2, 1])('a full Hermitian basis fixes a rank-%i state on d=3: point and bound are ⟨G, ρ⟩', (rank) => {
    const rng = seededRandom(900 + rank);
    const d = 3;
    const rho = randomDensity(d, rng, rank);
    const constraints: OracleConstraint[] = [];
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const operator = new ComplexMatrix(d, d);
        if (i === j) operator.re[i * d + i] = 1;
        if (i < j) {
          operator.set(i, j, 1);
          operator.set(j, i, 1);
        }
        if (i > j) {
          operator.set(i, j, 0, 1);
          operator.set(j, i, 0, -1);
        }
        const value = traceOfProduct(operator, rho);
        constraints.push({ label: `basis-${i}${j}`, operator, lower: value, upper: value });
      }
    }
    const G = randomHermitian(d, rng);
    const result = new LinearOracle(d, constraints).minimize(G);
    // Reference: the d² operators span all Hermitian matrices, so ρ is the only feasible state (common practice).
    const optimum = traceOfProduct(G, rho);
    expect(result.status).toBe('OPTIMAL');
    expect(Math.abs(result.primalValue - optimum)).toBeLessThan(1e-9);
    expect(result.dualBound).toBeLessThanOrEqual(optimum + 1e-12);
    expect(optimum - result.dualBound).toBeLessThan(1e-9);
    for (let t = 0; t < d * d; t++) {
      expect(Math.abs(result.point!.re[t] - rho.re[t])).toBeLessThan(1e-9);
      expect(Math.abs(result.point!.im[t] - rho.im[t])).toBeLessThan(1e-9);
    }
  });
});

describe('LinearOracle: projection onto the equalities and stripping the equality span', () => {
  const rng = seededRandom(800);
  const dB = 3;
  const m = randomMarginalFactor(rng);
  const rho = stateWithMarginal(m, dB, rng);
  const constraints = [
    ...marginalConstraints(multiplyAdjointRight(m, m), dB),
    ...tableConstraints(rho, dB, rng),
    { label: 'interval', operator: randomHermitian(2 * dB, rng), lower: -0.5, upper: 0.5 },
  ];
  const oracle = new LinearOracle(2 * dB, constraints);

  it('the projection meets the equalities to 1e-13 and is idempotent', () => {
    const X = randomHermitian(2 * dB, rng);
    const projected = oracle.projectOntoEqualities(X);
    let trace = 0;
    for (let i = 0; i < 2 * dB; i++) trace += projected.re[i * 2 * dB + i];
    expect(Math.abs(trace - 1)).toBeLessThan(1e-13);
    for (const c of constraints) {
      if (c.lower !== c.upper) continue;
      expect(Math.abs(traceOfProduct(c.operator, projected) - c.lower)).toBeLessThan(1e-13);
    }
    const twice = oracle.projectOntoEqualities(projected);
    for (let t = 0; t < twice.re.length; t++) {
      expect(Math.abs(twice.re[t] - projected.re[t])).toBeLessThan(1e-13);
      expect(Math.abs(twice.im[t] - projected.im[t])).toBeLessThan(1e-13);
    }
    // Orthogonal: X − P(X) lies in span{1, Γ_eq}, so it is orthogonal to P(Y) − P(X) for any Y (Pythagoras).
    const other = oracle.projectOntoEqualities(randomHermitian(2 * dB, rng));
    const difference = add(X, scale(projected, -1));
    const along = add(other, scale(projected, -1));
    expect(Math.abs(traceOfProduct(difference, along))).toBeLessThan(1e-12);
  });

  it('stripEqualitySpan reconstructs G and leaves a part orthogonal to 1 and every equality operator', () => {
    const G = randomHermitian(2 * dB, rng);
    const { stripped, identityCoefficient, equalityCoefficients } = oracle.stripEqualitySpan(G);
    let rebuilt = add(stripped, scale(ComplexMatrix.identity(2 * dB), identityCoefficient));
    constraints.forEach((c, i) => {
      if (c.lower !== c.upper) expect(equalityCoefficients[i]).toBe(0);
      rebuilt = add(rebuilt, scale(c.operator, equalityCoefficients[i]));
    });
    for (let t = 0; t < G.re.length; t++) {
      expect(Math.abs(rebuilt.re[t] - G.re[t])).toBeLessThan(1e-12);
      expect(Math.abs(rebuilt.im[t] - G.im[t])).toBeLessThan(1e-12);
    }
    expect(Math.abs(traceOfProduct(stripped, ComplexMatrix.identity(2 * dB)))).toBeLessThan(1e-13);
    for (const c of constraints) {
      if (c.lower === c.upper) expect(Math.abs(traceOfProduct(stripped, c.operator))).toBeLessThan(1e-13);
    }
    // The removed part is constant on the feasible set, so minimizing G or the stripped G gives the same point.
    const full = oracle.minimize(G);
    const strippedResult = oracle.minimize(stripped);
    expect(Math.abs(full.primalValue - traceOfProduct(G, strippedResult.point!))).toBeLessThan(1e-6);
  });
});
