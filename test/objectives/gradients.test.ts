// Gradients of every kind against central finite differences (relative error ≤ 1e-6; docs/math.md §3, common practice).
import { describe, expect, it } from 'vitest';
import { addScaledInPlace, ComplexMatrix, frobeniusNorm, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import type { EntropyKind, Problem } from '../../src/problem/model.js';
import { randomDensity, randomHermitian, randomIsometry, seededRandom } from '../helpers/random.js';
import { multiply, multiplyAdjointRight } from '../../src/linear-algebra/complex-matrix.js';
import { randomInstrumentProblem } from './fixtures.js';

const STEP = 1e-5;
/** The sandwiched inner maximisation is solved to rounding level here so that differences of values are exact. */
const TIGHT_REFERENCE = { relativeTolerance: 1e-15, maxIterations: 5000 };

function shifted(rho: ComplexMatrix, direction: ComplexMatrix, t: number): ComplexMatrix {
  const out = rho.clone();
  addScaledInPlace(out, direction, t);
  return out;
}

function checkGradient(problem: Problem, kind: EntropyKind, alpha: number, seed: number) {
  const rng = seededRandom(seed);
  const d = problem.dimensionA * problem.dimensionB;
  const rho = randomDensity(d, rng);
  const objective = createObjective(problem, { kind, alpha }, TIGHT_REFERENCE);
  const gradient = objective.evaluate(rho).gradient as ComplexMatrix;
  for (let trial = 0; trial < 3; trial++) {
    const direction = randomHermitian(d, rng);
    const scaleToState = (0.1 * frobeniusNorm(rho)) / frobeniusNorm(direction);
    for (let k = 0; k < direction.re.length; k++) {
      direction.re[k] *= scaleToState;
      direction.im[k] *= scaleToState;
    }
    const plus = objective.evaluate(shifted(rho, direction, STEP)).value;
    const minus = objective.evaluate(shifted(rho, direction, -STEP)).value;
    const finite = (plus - minus) / (2 * STEP);
    const analytic = traceProductReal(gradient, direction);
    expect(Math.abs(analytic - finite)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(finite), frobeniusNorm(gradient) * frobeniusNorm(direction)));
  }
}

describe('gradients match central finite differences', () => {
  const kinds: EntropyKind[] = ['von-neumann', 'petz-up', 'petz-down', 'sandwiched-up'];
  for (const kind of kinds) {
    it(`${kind}: one branch, Alice's key`, () => {
      const problem = randomInstrumentProblem(2, 2, [4], [2], [0], seededRandom(3));
      checkGradient(problem, kind, 1.5, 101);
    });
    it(`${kind}: several branches with scores and a rank-deficient branch output`, () => {
      // Branch outputs of dimension 6 and 5 from a 4-dimensional input are rank deficient on their supports.
      const problem = randomInstrumentProblem(2, 2, [6, 5, 2], [3, 2, 1], [0.3, -0.2, 0.5], seededRandom(5));
      checkGradient(problem, kind, 1.8, 202);
    });
    it(`${kind}: qutrit ⊗ qubit with α close to 1`, () => {
      const problem = randomInstrumentProblem(3, 2, [4, 4, 3], [2, 2, 3], [0, 0.1, 0], seededRandom(9));
      checkGradient(problem, kind, 1.1, 303);
    });
  }

  // A state without full rank (the optimiser's iterates on a face with no full-rank feasible state): the gradient the
  // optimiser reads (assumeFullRank) must be finite, and along directions inside the state's support it must give the
  // derivative of F — the central difference of values computed by the other path (F restricted to the support).
  // Before, the Petz kinds' gradient was NaN there and sandwiched-up threw (0·∞ on the kernel).
  // (Von Neumann keeps ln 0 = −∞ on an exact kernel: its iterates carry rounding-level eigenvalues there instead.)
  for (const kind of ['petz-up', 'petz-down', 'sandwiched-up'] as EntropyKind[]) {
    it(`${kind}: a rank-2 state of a 6-dimensional space, directions inside its support`, () => {
      const rng = seededRandom(17);
      const problem = randomInstrumentProblem(3, 2, [4, 3], [2, 3], [0.1, 0], rng);
      const v = randomIsometry(6, 2, rng);
      const rho = multiplyAdjointRight(multiply(v, randomDensity(2, rng)), v);
      const objective = createObjective(problem, { kind, alpha: 1.5 }, TIGHT_REFERENCE);
      const gradient = objective.evaluate(rho, { assumeFullRank: true }).gradient as ComplexMatrix;
      for (let k = 0; k < gradient.re.length; k++) expect(Number.isFinite(gradient.re[k]) && Number.isFinite(gradient.im[k])).toBe(true);
      for (let trial = 0; trial < 3; trial++) {
        const direction = multiplyAdjointRight(multiply(v, randomHermitian(2, rng)), v);
        const value = (t: number) => objective.evaluate(shifted(rho, direction, t), { withGradient: false }).value;
        const finite = (value(STEP) - value(-STEP)) / (2 * STEP);
        const analytic = traceProductReal(gradient, direction);
        expect(Math.abs(analytic - finite)).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(finite), frobeniusNorm(gradient) * frobeniusNorm(direction)));
      }
    });
  }

  it('sandwiched-up: partial gradients at a fixed τ (the certificate linearization) match finite differences', () => {
    const rng = seededRandom(44);
    const problem = randomInstrumentProblem(2, 2, [5, 3], [2, 3], [0.2, 0], rng);
    const objective = createObjective(problem, { kind: 'sandwiched-up', alpha: 1.3 });
    const rho = randomDensity(4, rng);
    const reference = objective.evaluate(rho).reference!;
    // Move τ away from the optimum so its gradient is not just a multiple of the identity.
    const tilted = reference.map((blocks) => blocks.map((b) => shifted(b, ComplexMatrix.identity(b.rows), 0.01)));
    const joint = objective.evaluateAtReference(rho, tilted);
    const direction = randomHermitian(4, rng);
    const finiteState =
      (objective.evaluateAtReference(shifted(rho, direction, STEP), tilted).value -
        objective.evaluateAtReference(shifted(rho, direction, -STEP), tilted).value) /
      (2 * STEP);
    expect(traceProductReal(joint.gradientState, direction)).toBeCloseTo(finiteState, 7);
    tilted.forEach((blocks, c) =>
      blocks.forEach((block, k) => {
        const h = randomHermitian(block.rows, rng);
        const at = (t: number) =>
          objective.evaluateAtReference(
            rho,
            tilted.map((bs, cc) => bs.map((b, kk) => (cc === c && kk === k ? shifted(b, h, t * 0.01) : b))),
          ).value;
        const finite = (at(STEP) - at(-STEP)) / (2 * STEP);
        expect(0.01 * traceProductReal(joint.gradientReference[c][k], h)).toBeCloseTo(finite, 7);
      }),
    );
  });
});
