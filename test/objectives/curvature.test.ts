// The curvature the certificate margin measures (src/certificate/bound.ts, docs/convergence.md) against the
// Daleckii–Krein formula: for X = diag(λ), D log(X)[B] = [f¹(λ_i, λ_j)·B_ij] with the first divided difference
// f¹(a, b) = (ln a − ln b)/(a − b) (Daleckii & Krein 1965; Bhatia, Matrix Analysis, Thm V.3.3).
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, frobeniusNorm } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { aliceKeyProblem } from './fixtures.js';

/** (e_i e_j† + e_j e_i†)/√2, or e_i e_i† when i = j: unit Frobenius norm. */
function unitDirection(n: number, i: number, j: number): ComplexMatrix {
  const m = ComplexMatrix.zeros(n);
  const w = i === j ? 1 : Math.SQRT1_2;
  m.re[i * n + j] += w;
  if (i !== j) m.re[j * n + i] += w;
  return m;
}

const divided = (a: number, b: number) => (Math.log(a) - Math.log(b)) / (a - b);

describe('output curvature of the von Neumann objective at a diagonal state (Daleckii–Krein)', () => {
  // Key = Alice's qubit: blocks {0, 1} and {2, 3}. A diagonal X equals its pinching Z(X), so the Hessian of
  // (ln X − ln Z(X))/ln 2 applied to B is D log(X)[B − Z(B)]/ln 2: only entries across key blocks survive.
  const lambda = [0.6, 1e-6, 0.3, 0.1 - 1e-6];
  const rho = ComplexMatrix.diagonal(lambda);
  const objective = createObjective(aliceKeyProblem(2, 2), { kind: 'von-neumann' });
  const curvature = objective.outputCurvature(rho)!;

  it('across key blocks: ‖H[B]‖_F = f¹(λ_i, λ_j)/ln 2, graded by the eigenvalues the direction touches', () => {
    for (const [i, j] of [
      [0, 2],
      [1, 2],
      [1, 3],
      [0, 3],
    ]) {
      const expected = divided(lambda[i], lambda[j]) / Math.LN2;
      const [measured] = curvature.measure(unitDirection(4, i, j));
      expect(Math.abs(measured - expected)).toBeLessThanOrEqual(1e-2 * expected);
    }
    // The direction through the eigenvalue 1e-6 costs f¹ ≈ 42/ln 2, not the worst case 1/(λ_min ln 2) ≈ 1.4e6.
    expect(curvature.measure(unitDirection(4, 1, 2))[0]).toBeLessThan(1e2);
  });

  it('inside a key block the pinching cancels the curvature, even next to the eigenvalue 1e-6', () => {
    for (const [i, j] of [
      [0, 1],
      [1, 1],
      [2, 3],
    ]) {
      expect(curvature.measure(unitDirection(4, i, j))[0]).toBeLessThanOrEqual(1e-4);
    }
  });

  it('sizes: ‖X‖_F + ‖ρ‖_F·‖K‖_F² for the identity Kraus operator on C⁴', () => {
    expect(curvature.sizes[0]).toBeCloseTo(5 * frobeniusNorm(rho), 12);
  });
});
