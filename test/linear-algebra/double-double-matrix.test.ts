// The double-double Hermitian eigendecomposition against matrices whose eigenvalues are known exactly: X = W·Λ·W†
// with W = D·H/4 (H a Sylvester–Hadamard matrix of order 16, D a diagonal of phases ±1, ±i) is unitary with entries
// ±1/4, ±i/4, and with dyadic eigenvalues Λ every entry of X is a dyadic sum that double-double holds exactly
// (common practice: a unitary similarity keeps the spectrum).
import { describe, expect, it } from 'vitest';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { eigvalsh } from '../../src/linear-algebra/eigen.js';
import { DdMatrix, ddHermitianEigen, ddMultiply } from '../../src/linear-algebra/double-double-matrix.js';

const N = 16;

function hadamard(n: number): number[][] {
  let h = [[1]];
  while (h.length < n) h = [...h.map((row) => [...row, ...row]), ...h.map((row) => [...row, ...row.map((v) => -v)])];
  return h;
}

/** W = D·H/4, exactly representable: entries (±1 or ±i)/4. */
function exactUnitary(seed: number): ComplexMatrix {
  const h = hadamard(N);
  const w = new ComplexMatrix(N, N);
  for (let i = 0; i < N; i++) {
    const phase = (i * 7 + seed) % 4;
    for (let j = 0; j < N; j++) {
      const v = h[i][j] / 4;
      if (phase === 0) w.re[i * N + j] = v;
      else if (phase === 1) w.im[i * N + j] = v;
      else if (phase === 2) w.re[i * N + j] = -v;
      else w.im[i * N + j] = -v;
    }
  }
  return w;
}

/** Two eigenvalues near 1, the rest dyadic multiples of 2^−50 (≈ 1e-15): a lifted point's output, graded like it. */
const SPECTRUM = [0.75, 0.5, ...Array.from({ length: N - 2 }, (_, k) => (k + 1) * 2 ** -50)].sort((a, b) => a - b);

function gradedMatrix(seed: number): DdMatrix {
  const w = DdMatrix.from(exactUnitary(seed));
  const scaled = new DdMatrix(N, N);
  for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) scaled.set(i, j, [0, w.reHigh[i * N + j] * SPECTRUM[j]], [0, w.imHigh[i * N + j] * SPECTRUM[j]]);
  return ddMultiply(scaled, w, false, true);
}

describe('double-double Hermitian eigendecomposition (cyclic Jacobi)', () => {
  it('resolves eigenvalues near 1e-15 of the norm to 1e-20 relative, where double precision misses them', () => {
    for (const seed of [0, 1, 2]) {
      const x = gradedMatrix(seed);
      // The construction is exact: X is Hermitian to the last bit.
      const { values, residual } = ddHermitianEigen(x);
      values.forEach((v, i) => expect(Math.abs(v[1] + v[0] - SPECTRUM[i]) / SPECTRUM[i]).toBeLessThan(1e-20));
      // Its stated residual bounds the backward error, here of the order of 1e-31 of the norm.
      expect(residual).toBeLessThan(1e-28);
      // The same matrix in double: the small eigenvalues are off by about u·‖X‖ ≈ 1e-16, i.e. by up to 100 % of 1e-15.
      const doubles = eigvalsh(x.toDouble());
      const worst = Math.max(...SPECTRUM.slice(0, N - 2).map((s, i) => Math.abs(doubles[i] - s) / s));
      expect(worst).toBeGreaterThan(1e-3);
    }
  });

  it('its vectors diagonalise the matrix: W†XW is diag(Λ) to the stated residual (Frobenius)', () => {
    const x = gradedMatrix(3);
    const { values, vectors, residual } = ddHermitianEigen(x);
    const d = ddMultiply(ddMultiply(vectors, x, true), vectors);
    let off = 0;
    for (let i = 0; i < N; i++) {
      for (let j = 0; j < N; j++) {
        const re = d.reHigh[i * N + j] + d.reLow[i * N + j] - (i === j ? values[i][1] + values[i][0] : 0);
        off += re ** 2 + (d.imHigh[i * N + j] + d.imLow[i * N + j]) ** 2;
      }
    }
    expect(Math.sqrt(off)).toBeLessThanOrEqual(residual);
  });
});
