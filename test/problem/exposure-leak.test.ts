// The leak of an exposed face read in double-double (docs/faces.md, "The leak in double-double"), against a
// feasible state whose weight off the face is known exactly: its data are checked in exact rational arithmetic
// (mathjs fractions), so the state meets every constraint of the problem as given, not just to rounding.
import { fraction, type Fraction } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { feasibleFace } from '../../src/problem/feasible-face.js';
import { isometryDefect } from '../../src/problem/exposure-leak.js';
import type { Problem } from '../../src/problem/model.js';

/** H: Hermitian with dyadic entries; W = diag(0, 0, 1, 1) exposes span{|0⟩, |1⟩}. */
const H_RE = [
  [1 / 2, 1 / 4, 0, 3 / 8],
  [1 / 4, 1 / 4, 1 / 8, 0],
  [0, 1 / 8, 43 / 32, 1 / 16],
  [3 / 8, 0, 1 / 16, 3 / 4],
];
const H_IM = [
  [0, 1 / 8, -1 / 4, 0],
  [-1 / 8, 0, 0, 1 / 32],
  [1 / 4, 0, 0, 0],
  [0, -1 / 32, 0, 0],
];

function matrix(re: number[][], im: number[][]): ComplexMatrix {
  const m = new ComplexMatrix(4, 4);
  for (let i = 0; i < 4; i++) {
    for (let j = 0; j < 4; j++) {
      m.re[i * 4 + j] = re[i][j];
      m.im[i * 4 + j] = im[i][j];
    }
  }
  return m;
}

/** ρ = (1 − p)·diag(3/8, 5/8, 0, 0) + p·|2⟩⟨2|: Tr(Γρ) in exact fractions for a real diagonal ρ. */
function exactValue(re: number[][], p: Fraction): Fraction {
  const one = fraction(1);
  const onFace = fraction(3, 8).mul(fraction(re[0][0])).add(fraction(5, 8).mul(fraction(re[1][1])));
  return one.sub(p).mul(onFace).add(p.mul(fraction(re[2][2])));
}

/** The pair Γ₀ = H, Γ₁ = H + W with values at ρ; both values are doubles exactly (checked). */
function tiltedProblem(exponent: number | null): Problem {
  const p = exponent === null ? fraction(0) : fraction(1).div(fraction(2 ** exponent));
  const shiftedRe = H_RE.map((row, i) => row.map((x, j) => (i === j && i >= 2 ? x + 1 : x)));
  const values = [exactValue(H_RE, p), exactValue(shiftedRe, p)].map((exact) => {
    const value = exact.valueOf();
    // The double must be the exact rational, or ρ would meet the data only to rounding: value·2^110 is an integer
    // here (scaling by a power of two is exact), compared with the fraction in BigInt.
    expect(BigInt(value * 2 ** 110) * exact.d).toBe(exact.s * exact.n * 2n ** 110n);
    return value;
  });
  return {
    dimensionA: 2,
    dimensionB: 2,
    constraints: [
      { label: 'h', operator: matrix(H_RE, H_IM), lower: values[0], upper: values[0] },
      { label: 'h+w', operator: matrix(shiftedRe, H_IM), lower: values[1], upper: values[1] },
    ],
    branches: [{ label: 'b', krausOperators: [ComplexMatrix.identity(4)], keyProjectors: [], score: 0 }],
  } as unknown as Problem;
}

describe('the leak of an exposed face, read in double-double', () => {
  it('is at least the off-face weight p = 2^-50 of a state meeting the data exactly, and within 1 % of it', () => {
    const problem = tiltedProblem(50);
    // Z = (b₀ − b₁)·1 + W = W − p·1: negative by p on the face, so ρ (weight p on |2⟩) is feasible.
    const face = feasibleFace(problem, { exposures: [{ multipliers: [1, -1] }] });
    expect(face.dimension).toBe(2);
    const p = 2 ** -50;
    // Tr((1 − Π)ρ) = p for Π onto span{|0⟩, |1⟩}, which the face's isometry spans (checked via its last rows).
    const isometry = face.isometry!;
    for (let row = 2; row < 4; row++) {
      for (let col = 0; col < 2; col++) {
        expect(Math.abs(isometry.re[row * 2 + col]) + Math.abs(isometry.im[row * 2 + col])).toBeLessThan(1e-15);
      }
    }
    expect(face.leak).toBeGreaterThanOrEqual(p);
    expect(face.leak).toBeLessThanOrEqual(1.01 * p);
  });

  it('is far below the eigensolver scale when the data describe an exact face', () => {
    const face = feasibleFace(tiltedProblem(null), { exposures: [{ multipliers: [1, -1] }] });
    expect(face.dimension).toBe(2);
    // c·n·u·‖Z‖_F ≈ 1e-13 would be the eigensolver's reading; double-double sees the data's exact zero block.
    expect(face.leak).toBeLessThan(1e-25);
  });

  it('records the Gram defect of the isometry as stored', () => {
    const face = feasibleFace(tiltedProblem(50), { exposures: [{ multipliers: [1, -1] }] });
    expect(face.gramDefect).toBe(isometryDefect(face.isometry!));
    expect(face.gramDefect).toBeGreaterThan(0);
    expect(face.gramDefect).toBeLessThan(1e-13);
  });
});
