// Singular values of graded products G = D₁·U·D₂ by one-sided Jacobi: relative accuracy however graded (the
// spectrum of M = Y^s·X·Y^s in the Petz-up and sandwiched objectives is taken this way; docs/convergence.md).
import { describe, expect, it } from 'vitest';
import { BigNumber, bignumber, sqrt as bigSqrt } from 'mathjs';
import { ComplexMatrix, multiply, multiplyAdjointRight, frobeniusNorm, subtract } from '../../src/linear-algebra/complex-matrix.js';
import { oneSidedJacobi } from '../../src/objectives/spectral-blocks.js';
import { randomUnitary, seededRandom } from '../helpers/random.js';

const rotation = (theta: number) => ComplexMatrix.from([[Math.cos(theta), -Math.sin(theta)], [Math.sin(theta), Math.cos(theta)]]);

describe('one-sided Jacobi on graded matrices (Demmel & Veselić, SIAM J. Matrix Anal. Appl. 13, 1204, 1992)', () => {
  it('2×2 real D₁·R(θ)·D₂: both singular values to relative 1e-13 against a 40-digit mathjs BigNumber evaluation', () => {
    for (const [a, b, c, e, theta] of [
      [1, 0.1, 1, 1e-6, 0.3],
      [0.7, 0.3, 0.5, 2e-8, 1.1],
      [1, 0.05, 1e-3, 1e-9, 0.05],
    ]) {
      const g = multiply(multiply(ComplexMatrix.diagonal([a, b]), rotation(theta)), ComplexMatrix.diagonal([c, e]));
      const { singularValues } = oneSidedJacobi(g);
      // σ₁² + σ₂² = ‖G‖_F², σ₁σ₂ = |det G| = a·b·c·e (det R = 1): σ_max from the larger root, σ_min = |det|/σ_max.
      const big = (x: number) => bignumber(x) as BigNumber;
      const cos = big(Math.cos(theta));
      const sin = big(Math.sin(theta));
      const entries = [big(a).mul(cos).mul(c), big(a).mul(sin).mul(e), big(b).mul(sin).mul(c), big(b).mul(cos).mul(e)];
      const norm2 = entries.reduce((s, x) => s.add(x.mul(x)), big(0));
      const det = entries[0].mul(entries[3]).add(entries[1].mul(entries[2])).abs();
      const largest = bigSqrt(norm2.add(bigSqrt(norm2.mul(norm2).sub(det.mul(det).mul(4)))).div(2)) as BigNumber;
      const smallest = det.div(largest);
      const sorted = Array.from(singularValues).sort((x, y) => x - y);
      expect(Math.abs(sorted[0] / smallest.toNumber() - 1)).toBeLessThanOrEqual(1e-13);
      expect(Math.abs(sorted[1] / largest.toNumber() - 1)).toBeLessThanOrEqual(1e-13);
    }
  });

  it('4×4 complex D₁·U·D₂ with mild row grading (as Y^s) and columns spread over 12 decades (as X^{1/2}): Π σ = |det G| to 1e-13, and U·Σ²·U† = G·G†', () => {
    const rng = seededRandom(77);
    for (let trial = 0; trial < 5; trial++) {
      const d1 = [1, 0.3, 0.1, 0.05];
      const d2 = [1e-12, 1, 1e-3, 1e-7];
      const g = multiply(multiply(ComplexMatrix.diagonal(d1), randomUnitary(4, rng)), ComplexMatrix.diagonal(d2));
      const { left, singularValues } = oneSidedJacobi(g);
      const product = singularValues.reduce((p, s) => p * s, 1);
      const det = d1.reduce((p, s) => p * s, 1) * d2.reduce((p, s) => p * s, 1);
      expect(Math.abs(product / det - 1)).toBeLessThanOrEqual(1e-13);
      const squares = ComplexMatrix.diagonal(Array.from(singularValues, (s) => s * s));
      const gram = multiplyAdjointRight(g, g);
      const rebuilt = multiplyAdjointRight(multiply(left, squares), left);
      expect(frobeniusNorm(subtract(rebuilt, gram))).toBeLessThanOrEqual(1e-14 * frobeniusNorm(gram));
    }
  });
});
