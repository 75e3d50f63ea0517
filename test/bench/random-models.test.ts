// The random device models of the benchmark suite: valid problems whose generating state is feasible, with the
// rank and face structure their traits claim (checked with mathjs eigenvalues, not the project's eigensolver).
import { describe, expect, it } from 'vitest';
import { randomModel, SUITE_DIMENSIONS } from '../../src/bench/random-models.js';
import { traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { referenceEigenvalues } from '../oracle/reference.js';

describe('random device models', () => {
  it('are reproducible from (dimension, seed)', () => {
    const a = randomModel(8, 3);
    const b = randomModel(8, 3);
    expect(JSON.stringify(a.json)).toBe(JSON.stringify(b.json));
    expect(Array.from(a.truth.re)).toEqual(Array.from(b.truth.re));
    expect(JSON.stringify(randomModel(8, 4).json)).not.toBe(JSON.stringify(a.json));
  });

  for (const d of SUITE_DIMENSIONS.filter((n) => n <= 16)) {
    for (const seed of [1, 2, 3, 4, 5, 6]) {
      it(`d=${d} seed ${seed}: the generating state is a density operator of the stated rank meeting every constraint`, () => {
        const model = randomModel(d, seed);
        expect(model.problem.dimensionA * model.problem.dimensionB).toBe(d);
        // mathjs eigenvalues (reference.ts): ρ ⪰ 0 with exactly truthRank eigenvalues clearly above rounding.
        const values = referenceEigenvalues(model.truth);
        expect(values[0]).toBeGreaterThan(-1e-12);
        expect(values.filter((v) => v > 1e-10).length).toBe(model.traits.truthRank);
        expect(values.reduce((s, v) => s + v, 0)).toBeCloseTo(1, 12);
        for (const c of model.problem.constraints) {
          const value = traceProductReal(c.operator, model.truth);
          expect(value).toBeGreaterThanOrEqual(c.lower - 1e-12);
          expect(value).toBeLessThanOrEqual(c.upper + 1e-12);
        }
        expect(model.problem.branches.length).toBe(model.traits.branches);
      });
    }
  }

  it('face models carry equalities whose difference is a PSD operator vanishing on the state (no full-rank state is feasible)', () => {
    const model = randomModel(8, 11, { face: true, truthRank: 3 });
    const face = model.problem.constraints.filter((c) => c.label.startsWith('face-'));
    expect(face.length).toBe(4);
    const difference = face[1].operator.clone();
    for (let t = 0; t < difference.re.length; t++) {
      difference.re[t] -= face[0].operator.re[t];
      difference.im[t] -= face[0].operator.im[t];
    }
    // Z = Γ₁ − Γ₀ ⪰ 0 with rank d − rank(ρ) (mathjs), and Tr(Zσ) = 0 for every feasible σ: σ lies in ker Z.
    const values = referenceEigenvalues(difference);
    expect(values[0]).toBeGreaterThan(-1e-12);
    expect(values.filter((v) => v > 1e-8).length).toBe(8 - 3);
    expect(Math.abs(face[1].lower - face[0].lower)).toBeLessThan(1e-12);
  });

  it('box models surround a state well inside the cone with d² − 1 intervals (optimum interior, intervals active)', () => {
    const model = randomModel(4, 4);
    expect(model.traits.box).toBe(true);
    expect(model.problem.constraints.length).toBe(15);
    expect(model.problem.constraints.every((c) => Math.abs(c.upper - c.lower - 2e-3) < 1e-12)).toBe(true);
    // mathjs: the generating state is far from the boundary of the cone.
    expect(referenceEigenvalues(model.truth)[0]).toBeGreaterThan(1e-3);
  });

  it('larger dimensions build within the constraint budget', () => {
    const model = randomModel(32, 1);
    expect(model.problem.constraints.length).toBeGreaterThan(10);
    expect(model.problem.constraints.length).toBeLessThan(120);
  });
});
