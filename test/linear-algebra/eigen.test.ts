import fc from 'fast-check';
import * as math from 'mathjs';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, hermitianPart, scale, trace } from '../../src/linear-algebra/complex-matrix.js';
import { eigh, eighHouseholder, eigvalsh, type HermitianEigen } from '../../src/linear-algebra/eigen.js';
import { eighJacobi, eighRealEmbedding } from '../../src/bench/reference-eigensolvers.js';
import { randomDensity, randomHermitian, randomIsometry, seededRandom } from '../helpers/random.js';
import { fromSpectrum, isAscending, orthonormalityDefect, relativeResidual } from './eigen-helpers.js';

/** Accuracy demanded of every solver path (spec: 1e-12 relative). */
const ACCURACY = 1e-12;

type Solver = (a: ComplexMatrix) => HermitianEigen;
const solvers: [string, Solver, number][] = [
  // name, solver, largest size tested (Jacobi and the embedding are slow beyond that)
  ['eigh', eigh, 256],
  ['eighHouseholder', eighHouseholder, 128], // eigh runs this same path at 256
  ['eighJacobi', eighJacobi, 64],
  ['eighRealEmbedding', eighRealEmbedding, 64],
];

function expectAccurate(a: ComplexMatrix, eig: HermitianEigen): void {
  expect(eig.values.length).toBe(a.rows);
  expect(isAscending(eig.values)).toBe(true);
  expect(relativeResidual(a, eig)).toBeLessThanOrEqual(ACCURACY);
  expect(orthonormalityDefect(eig.vectors)).toBeLessThanOrEqual(ACCURACY);
}

/** Matrix with eigenvalues `d` in a random eigenbasis. */
function withSpectrum(d: number[], seed: number): ComplexMatrix {
  const v = randomIsometry(d.length, d.length, seededRandom(seed));
  return hermitianPart(fromSpectrum(v, d));
}

describe.each(solvers)('%s', (_name, solve, maxSize) => {
  const sizes = [1, 2, 3, 4, 5, 8, 16, 33, 64, 128, 256].filter((n) => n <= maxSize);

  it.each(sizes)('random Hermitian n=%i: A·V = V·Λ and V†V = 1 to 1e-12', (n) => {
    const a = randomHermitian(n, seededRandom(1000 + n));
    expectAccurate(a, solve(a));
  });

  it.each(sizes.filter((n) => n >= 2))('rank-deficient density operator n=%i', (n) => {
    const a = randomDensity(n, seededRandom(2000 + n), Math.max(1, Math.floor(n / 3)));
    const eig = solve(a);
    expectAccurate(a, eig);
  });

  it.each(sizes.filter((n) => n >= 3))('repeated eigenvalues (triples) n=%i', (n) => {
    const d = Array.from({ length: n }, (_, i) => Math.floor(i / 3) - 1);
    const a = withSpectrum(d, 3000 + n);
    const eig = solve(a);
    expectAccurate(a, eig);
    const sorted = [...d].sort((x, y) => x - y);
    for (let i = 0; i < n; i++) expect(Math.abs(eig.values[i] - sorted[i])).toBeLessThanOrEqual(1e-12 * n);
  });

  it('diagonal, 1×1, 2×2, zero and identity matrices', () => {
    const diag = ComplexMatrix.diagonal([3, -1, 2, -1, 0]);
    const e = solve(diag);
    expectAccurate(diag, e);
    expect(Array.from(e.values)).toEqual([-1, -1, 0, 2, 3]);

    const one = ComplexMatrix.from([[[-2.5, 0]]]);
    const e1 = solve(one);
    expect(e1.values[0]).toBe(-2.5);
    expect(Math.hypot(e1.vectors.re[0], e1.vectors.im[0])).toBeCloseTo(1, 15);

    // [[2, 1+i], [1−i, 3]] has eigenvalues 1 and 4 (characteristic polynomial λ² − 5λ + 4).
    const two = ComplexMatrix.from([
      [2, [1, 1]],
      [[1, -1], 3],
    ]);
    const e2 = solve(two);
    expectAccurate(two, e2);
    expect(e2.values[0]).toBeCloseTo(1, 14);
    expect(e2.values[1]).toBeCloseTo(4, 14);

    const zero = ComplexMatrix.zeros(4);
    const ez = solve(zero);
    expect(Array.from(ez.values)).toEqual([0, 0, 0, 0]);
    expect(orthonormalityDefect(ez.vectors)).toBeLessThanOrEqual(ACCURACY);

    const id = ComplexMatrix.identity(6);
    const ei = solve(id);
    expectAccurate(id, ei);
  });

  it('huge and tiny scales keep relative accuracy (no overflow in norms)', () => {
    for (const s of [1e150, 1e-150]) {
      const a = scale(randomHermitian(12, seededRandom(77)), s);
      expectAccurate(a, solve(a));
    }
  });

  it('reads the Hermitian part of a non-Hermitian input', () => {
    const rng = seededRandom(55);
    const h = randomHermitian(7, rng);
    const skew = randomHermitian(7, rng);
    // A = H + i·S has Hermitian part H exactly when S is Hermitian.
    const a = new ComplexMatrix(7, 7);
    for (let k = 0; k < 49; k++) {
      a.re[k] = h.re[k] - skew.im[k];
      a.im[k] = h.im[k] + skew.re[k];
    }
    const fromA = solve(a);
    const fromH = solve(h);
    for (let i = 0; i < 7; i++) expect(Math.abs(fromA.values[i] - fromH.values[i])).toBeLessThanOrEqual(1e-13);
    expectAccurate(h, fromA);
  });
});

describe('eighRealEmbedding on nearly degenerate spectra', () => {
  it('distinct eigenvalues closer than its cluster tolerance keep accurate eigenvectors', () => {
    const n = 64;
    const rng = seededRandom(8080);
    const spectrum = Array.from({ length: n }, () => 2 * rng() - 1);
    // Six eigenvalues 0.5 + k·5e-12: inside one cluster of the embedding, yet far apart for a 1e-12 residual.
    for (let k = 0; k < 6; k++) spectrum[k] = 0.5 + k * 5e-12;
    const a = withSpectrum(spectrum, 8081);
    const eig = eighRealEmbedding(a);
    expectAccurate(a, eig);
  });
});

describe('input checks (messages pinned)', () => {
  it('rejects non-square input', () => {
    expect(() => eigh(new ComplexMatrix(2, 3))).toThrow('eigh: matrix is 2x3, not square');
    expect(() => eigvalsh(new ComplexMatrix(3, 1))).toThrow('eigvalsh: matrix is 3x1, not square');
    expect(() => eighRealEmbedding(new ComplexMatrix(1, 2))).toThrow('eighRealEmbedding: matrix is 1x2, not square');
  });

  it('rejects NaN and infinite entries, naming the entry', () => {
    const a = ComplexMatrix.identity(3);
    a.re[1 * 3 + 2] = Number.NaN;
    expect(() => eigh(a)).toThrow('eigh: entry (1, 2) is not finite (NaN)');
    const b = ComplexMatrix.identity(5);
    b.im[4 * 5 + 0] = Number.POSITIVE_INFINITY;
    expect(() => eigh(b)).toThrow('eigh: entry (4, 0) is not finite (Infinity)');
    expect(() => eighJacobi(b)).toThrow('eigh: entry (4, 0) is not finite (Infinity)');
  });

  it('accepts the empty matrix', () => {
    const e = eigh(new ComplexMatrix(0, 0));
    expect(e.values.length).toBe(0);
    expect(eighHouseholder(new ComplexMatrix(0, 0)).values.length).toBe(0);
  });
});

describe('eigenvalues against independent libraries', () => {
  it.each([2, 3, 5, 8, 12])('mathjs eigs on a complex Hermitian n=%i', (n) => {
    const a = randomHermitian(n, seededRandom(4000 + n));
    // Reference: mathjs 15 `eigs` (general complex eigen-solver), an independent implementation.
    const entries = Array.from({ length: n }, (_, i) =>
      Array.from({ length: n }, (_, j) => math.complex(a.re[i * n + j], a.im[i * n + j])),
    );
    const result = math.eigs(entries, { eigenvectors: false });
    const reference = (result.values as unknown as (number | math.Complex)[])
      .map((v) => (typeof v === 'number' ? v : v.re))
      .sort((x, y) => x - y);
    const ours = eigh(a).values;
    const scaleA = Math.max(...reference.map(Math.abs));
    for (let i = 0; i < n; i++) expect(Math.abs(ours[i] - reference[i])).toBeLessThanOrEqual(1e-12 * scaleA);
  });

  it.each([3, 6])('mathjs eigs eigenvectors: the same rank-one projectors v·v† (n=%i)', (n) => {
    const a = randomHermitian(n, seededRandom(4500 + n));
    const entries = Array.from({ length: n }, (_, i) =>
      Array.from({ length: n }, (_, j) => math.complex(a.re[i * n + j], a.im[i * n + j])),
    );
    // Reference: mathjs 15 `eigs` with eigenvectors; eigenvectors are unique up to a phase for simple eigenvalues.
    const pairs = math.eigs(entries).eigenvectors.map((pair) => ({
      value: typeof pair.value === 'number' ? pair.value : (pair.value as math.Complex).re,
      vector: (math.isMatrix(pair.vector) ? pair.vector.toArray() : pair.vector) as (number | math.Complex)[],
    }));
    pairs.sort((x, y) => x.value - y.value);
    const ours = eigh(a);
    for (let c = 0; c < n; c++) {
      const ref = pairs[c].vector.map((z) => (typeof z === 'number' ? { re: z, im: 0 } : { re: z.re, im: z.im }));
      const norm = Math.sqrt(ref.reduce((s, z) => s + z.re * z.re + z.im * z.im, 0));
      // |⟨ours, ref⟩| = 1 for unit vectors spanning the same line.
      let ipRe = 0;
      let ipIm = 0;
      for (let i = 0; i < n; i++) {
        const vr = ours.vectors.re[i * n + c];
        const vi = ours.vectors.im[i * n + c];
        ipRe += vr * ref[i].re + vi * ref[i].im;
        ipIm += vr * ref[i].im - vi * ref[i].re;
      }
      expect(Math.abs(Math.hypot(ipRe, ipIm) / norm - 1)).toBeLessThanOrEqual(1e-10);
    }
  });

  it.each([3, 10, 40])('ml-matrix on the real embedding [[Re A, −Im A], [Im A, Re A]] (n=%i): each eigenvalue twice', (n) => {
    const a = randomHermitian(n, seededRandom(5000 + n));
    const rows: number[][] = [];
    for (let i = 0; i < 2 * n; i++) rows.push(new Array<number>(2 * n).fill(0));
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        rows[i][j] = a.re[i * n + j];
        rows[i + n][j + n] = a.re[i * n + j];
        rows[i][j + n] = -a.im[i * n + j];
        rows[i + n][j] = a.im[i * n + j];
      }
    }
    // Reference: ml-matrix EigenvalueDecomposition (tred2/tql2), symmetric by construction.
    const reference = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true }).realEigenvalues.sort((x, y) => x - y);
    const ours = eigh(a).values;
    const scaleA = Math.max(...reference.map(Math.abs));
    for (let i = 0; i < n; i++) {
      expect(Math.abs(ours[i] - reference[2 * i])).toBeLessThanOrEqual(1e-12 * scaleA);
      expect(Math.abs(ours[i] - reference[2 * i + 1])).toBeLessThanOrEqual(1e-12 * scaleA);
    }
  });

  it('eigvalsh agrees with eigh', () => {
    for (const n of [1, 4, 17, 50]) {
      const a = randomHermitian(n, seededRandom(6000 + n));
      const full = eigh(a).values;
      const only = eigvalsh(a);
      for (let i = 0; i < n; i++) expect(Math.abs(full[i] - only[i])).toBeLessThanOrEqual(1e-13 * n);
    }
  });

  it('Jacobi and Householder–QL agree on eigenvalues', () => {
    const a = randomHermitian(20, seededRandom(7000));
    const j = eighJacobi(a).values;
    const h = eighHouseholder(a).values;
    for (let i = 0; i < 20; i++) expect(Math.abs(j[i] - h[i])).toBeLessThanOrEqual(1e-13 * 20);
  });
});

describe('property: arbitrary small Hermitian matrices (fast-check)', () => {
  const entry = fc.double({ min: -10, max: 10, noNaN: true, noDefaultInfinity: true });
  const hermitian = fc.integer({ min: 1, max: 7 }).chain((n) =>
    fc.array(fc.tuple(entry, entry), { minLength: n * n, maxLength: n * n }).map((pairs) => {
      const m = new ComplexMatrix(n, n);
      pairs.forEach(([re, im], k) => {
        m.re[k] = re;
        m.im[k] = im;
      });
      return hermitianPart(m);
    }),
  );

  it('A·V = V·Λ, V†V = 1, ascending, Σλ = Tr A', () => {
    fc.assert(
      fc.property(hermitian, (a) => {
        for (const solve of [eigh, eighHouseholder, eighJacobi]) {
          const eig = solve(a);
          expectAccurate(a, eig);
          const sum = eig.values.reduce((s, x) => s + x, 0);
          expect(Math.abs(sum - trace(a).re)).toBeLessThanOrEqual(1e-12 * (1 + Math.abs(trace(a).re)) * a.rows * 10);
        }
      }),
      { numRuns: 200, seed: 20261201 },
    );
  });
});
