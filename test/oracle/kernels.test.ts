import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, multiply, multiplyAdjointRight } from '../../src/linear-algebra/complex-matrix.js';
import {
  blockedPairSums,
  choleskyInPlace,
  lowerCongruence,
  lowerGram,
  lowerTimesTransposed,
  lowerTriangularInverse,
  multiplyByHermitian,
  toSparse,
  transposedSparseProductWithLower,
  transposeInto,
  realCholeskySolveInPlace,
  smallestEigenvalueInPlace,
  TridiagonalWorkspace,
  choleskyInPlaceReal,
  lowerCongruenceSymmetricReal,
  lowerGramReal,
  lowerTimesTransposedReal,
  lowerTriangularInverseReal,
  multiplyBySymmetricReal,
  smallestEigenvalueInPlaceReal,
  transposedProductWithLowerReal,
  transposedSparseProductWithLowerReal,
} from '../../src/oracle/kernels.js';
import { randomComplexGaussian, randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { referenceEigenvalues } from './reference.js';

function maxAbsDifference(a: ComplexMatrix, b: ComplexMatrix): number {
  let worst = 0;
  for (let t = 0; t < a.re.length; t++) worst = Math.max(worst, Math.abs(a.re[t] - b.re[t]), Math.abs(a.im[t] - b.im[t]));
  return worst;
}

describe('oracle kernels', () => {
  it.each([1, 2, 5, 12, 30])('complex Cholesky: L·L† reproduces a positive definite matrix (n=%i)', (n) => {
    const a = randomDensity(n, seededRandom(10 + n));
    const l = a.clone();
    expect(choleskyInPlace(l.re, l.im, n)).toBe(true);
    for (let i = 0; i < n; i++) {
      expect(l.im[i * n + i]).toBe(0);
      expect(l.re[i * n + i]).toBeGreaterThan(0);
      for (let j = i + 1; j < n; j++) expect(l.re[i * n + j] === 0 && l.im[i * n + j] === 0).toBe(true);
    }
    // Reference: the defining identity A = L·L† (computed with the shared complex product).
    expect(maxAbsDifference(multiplyAdjointRight(l, l), a)).toBeLessThan(1e-14);
  });

  it('complex Cholesky reports a matrix that is not positive definite', () => {
    const a = randomHermitian(6, seededRandom(3));
    const indefinite = referenceEigenvalues(a)[0] < 0;
    expect(indefinite).toBe(true);
    expect(choleskyInPlace(a.re.slice(), a.im.slice(), 6)).toBe(false);
  });

  it('triangular inverse and U†U give the inverse of L·L†', () => {
    const n = 9;
    const a = randomDensity(n, seededRandom(21));
    const l = a.clone();
    choleskyInPlace(l.re, l.im, n);
    const u = new ComplexMatrix(n, n);
    lowerTriangularInverse(l.re, l.im, n, u.re, u.im);
    const inverse = new ComplexMatrix(n, n);
    lowerGram(u.re, u.im, n, inverse.re, inverse.im);
    const product = multiply(a, inverse);
    // A·A⁻¹ = 1, to the accuracy the condition number of A allows.
    const values = referenceEigenvalues(a);
    const condition = values[n - 1] / values[0];
    expect(maxAbsDifference(product, ComplexMatrix.identity(n))).toBeLessThan(1e-14 * condition);
  });

  it.each([1, 2, 3, 4, 7, 16, 33])('smallest eigenvalue by Householder + Sturm bisection matches mathjs (n=%i)', (n) => {
    const rng = seededRandom(40 + n);
    for (let trial = 0; trial < 3; trial++) {
      const a = randomHermitian(n, rng);
      const reference = referenceEigenvalues(a)[0];
      const work = new TridiagonalWorkspace(n);
      const value = smallestEigenvalueInPlace(a.re.slice(), a.im.slice(), n, work);
      expect(Math.abs(value - reference)).toBeLessThan(1e-12 * Math.max(1, Math.abs(reference)));
      expect(value).toBeLessThanOrEqual(reference + 1e-13);
    }
  });

  it('smallest eigenvalue of structured inputs: diagonal, repeated, already tridiagonal, rank one', () => {
    const work = new TridiagonalWorkspace(5);
    const diagonal = ComplexMatrix.diagonal([3, -1, 2, -1, 5]);
    expect(smallestEigenvalueInPlace(diagonal.re, diagonal.im, 5, work)).toBeCloseTo(-1, 14);
    const identity = ComplexMatrix.identity(5);
    expect(smallestEigenvalueInPlace(identity.re, identity.im, 5, work)).toBeCloseTo(1, 14);
    const v = randomComplexGaussian(5, 1, seededRandom(5));
    const rankOne = multiplyAdjointRight(v, v);
    const norm2 = v.re.reduce((s, x) => s + x * x, 0) + v.im.reduce((s, x) => s + x * x, 0);
    const negated = new ComplexMatrix(5, 5, rankOne.re.map((x) => -x), rankOne.im.map((x) => -x));
    // −v·v† has eigenvalues −‖v‖² and 0 (four times).
    expect(smallestEigenvalueInPlace(negated.re, negated.im, 5, work)).toBeCloseTo(-norm2, 12);
    expect(Math.abs(smallestEigenvalueInPlace(rankOne.re, rankOne.im, 5, work))).toBeLessThan(1e-13 * norm2);
  });

  it.each([1, 4, 7, 10])('U·A·L: blocked dense and sparse kernels agree with plain products (n=%i)', (n) => {
    const rng = seededRandom(60 + n);
    const l = randomDensity(n, rng);
    choleskyInPlace(l.re, l.im, n);
    const z = randomDensity(n, rng);
    choleskyInPlace(z.re, z.im, n);
    const u = new ComplexMatrix(n, n);
    lowerTriangularInverse(z.re, z.im, n, u.re, u.im);
    // A sparse Hermitian operator: a few symmetric pairs.
    const a = new ComplexMatrix(n, n);
    for (let pair = 0; pair < n; pair++) {
      const i = Math.floor(rng() * n);
      const j = Math.floor(rng() * n);
      const re = rng() - 0.5;
      const im = i === j ? 0 : rng() - 0.5;
      a.set(i, j, re, im);
      a.set(j, i, re, -im);
    }
    // Reference: two plain dense products (shared src/linear-algebra kernels).
    const expected = multiply(u, multiply(a, l));
    const lt = new ComplexMatrix(n, n);
    transposeInto(l.re, l.im, n, lt.re, lt.im);
    const scratch = new ComplexMatrix(n, n);
    const dense = new ComplexMatrix(n, n);
    lowerCongruence(a.re, a.im, lt.re, lt.im, u.re, u.im, n, scratch.re, scratch.im, dense.re, dense.im);
    const sparse = new ComplexMatrix(n, n);
    transposedSparseProductWithLower(toSparse(a.re, a.im, n), l.re, l.im, n, scratch.re, scratch.im);
    lowerTimesTransposed(u.re, u.im, scratch.re, scratch.im, n, sparse.re, sparse.im);
    const size = Math.max(1, ...expected.re.map(Math.abs));
    expect(maxAbsDifference(dense, expected)).toBeLessThan(1e-13 * size);
    expect(maxAbsDifference(sparse, expected)).toBeLessThan(1e-13 * size);
  });

  it.each([1, 2, 5, 8])('product with a Hermitian right factor agrees with the shared complex product (n=%i)', (n) => {
    const rng = seededRandom(90 + n);
    const a = randomComplexGaussian(n, n, rng);
    const b = randomHermitian(n, rng);
    const out = new ComplexMatrix(n, n);
    multiplyByHermitian(a.re, a.im, b.re, b.im, n, out.re, out.im);
    // Reference: the shared dense product of src/linear-algebra.
    expect(maxAbsDifference(out, multiply(a, b))).toBeLessThan(1e-13 * n);
  });

  it.each([1, 2, 5, 8, 13])('real twins agree with the complex kernels on real data (n=%i)', (n) => {
    const rng = seededRandom(120 + n);
    const real = (m: ComplexMatrix): ComplexMatrix => new ComplexMatrix(m.rows, m.cols, m.re.slice(), new Float64Array(m.re.length));
    const x = real(randomDensity(n, rng));
    const z = real(randomDensity(n, rng));
    const a = real(randomHermitian(n, rng));
    const size = n * n;
    // Cholesky, inverse, Gram.
    const lComplex = x.clone();
    choleskyInPlace(lComplex.re, lComplex.im, n);
    const lReal = x.re.slice();
    expect(choleskyInPlaceReal(lReal, n)).toBe(true);
    const uComplex = new ComplexMatrix(n, n);
    lowerTriangularInverse(lComplex.re, lComplex.im, n, uComplex.re, uComplex.im);
    const uReal = new Float64Array(size);
    lowerTriangularInverseReal(lReal, n, uReal);
    const gramComplex = new ComplexMatrix(n, n);
    lowerGram(uComplex.re, uComplex.im, n, gramComplex.re, gramComplex.im);
    const gramReal = new Float64Array(size);
    lowerGramReal(uReal, n, gramReal);
    for (let t = 0; t < size; t++) {
      expect(lReal[t]).toBeCloseTo(lComplex.re[t], 12);
      expect(gramReal[t]).toBeCloseTo(gramComplex.re[t], 8);
    }
    // U·A·L, dense and sparse.
    const lt = new ComplexMatrix(n, n);
    transposeInto(lComplex.re, lComplex.im, n, lt.re, lt.im);
    const expected = multiply(uComplex, multiply(a, lComplex));
    const wt = new Float64Array(size);
    const out = new Float64Array(size);
    transposedProductWithLowerReal(a.re, lt.re, n, wt);
    lowerTimesTransposedReal(uReal, wt, n, out);
    for (let t = 0; t < size; t++) expect(Math.abs(out[t] - expected.re[t])).toBeLessThan(1e-10 * (1 + Math.abs(expected.re[t])));
    transposedSparseProductWithLowerReal(toSparse(a.re, a.im, n), lReal, n, wt);
    lowerTimesTransposedReal(uReal, wt, n, out);
    for (let t = 0; t < size; t++) expect(Math.abs(out[t] - expected.re[t])).toBeLessThan(1e-10 * (1 + Math.abs(expected.re[t])));
    // Product with a symmetric factor; step-length congruence and its smallest eigenvalue.
    multiplyBySymmetricReal(a.re, z.re, n, out);
    const product = multiply(a, z);
    for (let t = 0; t < size; t++) expect(Math.abs(out[t] - product.re[t])).toBeLessThan(1e-13 * n);
    const congruence = new Float64Array(size);
    lowerCongruenceSymmetricReal(uReal, a.re, n, wt, congruence);
    const reference = multiplyAdjointRight(multiply(uComplex, a), uComplex);
    for (let t = 0; t < size; t++) expect(Math.abs(congruence[t] - reference.re[t])).toBeLessThan(1e-8 * (1 + Math.abs(reference.re[t])));
    const lambda = smallestEigenvalueInPlaceReal(a.re.slice(), n, new TridiagonalWorkspace(n));
    expect(Math.abs(lambda - referenceEigenvalues(a)[0])).toBeLessThan(1e-12 * Math.max(1, Math.abs(lambda)));
  });

  it('real Cholesky solve agrees with ml-matrix', () => {
    const rng = seededRandom(77);
    const m = 12;
    const b = Matrix.rand(m, m, { random: rng });
    const spd = b.mmul(b.transpose()).add(Matrix.eye(m, m).mul(0.1));
    const rhs = Array.from({ length: m }, () => rng() - 0.5);
    const factor = Float64Array.from(spd.to1DArray());
    expect(choleskyInPlaceReal(factor, m)).toBe(true);
    const x = Float64Array.from(rhs);
    realCholeskySolveInPlace(factor, m, x);
    // Reference: ml-matrix CholeskyDecomposition.solve.
    const reference = new CholeskyDecomposition(spd).solve(Matrix.columnVector(rhs)).to1DArray();
    for (let i = 0; i < m; i++) expect(Math.abs(x[i] - reference[i])).toBeLessThan(1e-10 * (1 + Math.abs(reference[i])));
    const notDefinite = Float64Array.from(spd.sub(Matrix.eye(m, m).mul(1e6)).to1DArray());
    expect(choleskyInPlaceReal(notDefinite, m)).toBe(false);
  });

  it('blocked pair sums equal the product [a, sign·a′]·[b, b′]ᵀ from ml-matrix, complex and real, odd and even counts', () => {
    const rng = seededRandom(41);
    // 300 entries: two full chunks and a partial one; counts 7 and 10 leave an unpaired row and a partial block of four.
    const size = 300;
    for (const count of [7, 10]) {
      const vector = () => Float64Array.from({ length: count * size }, () => rng() - 0.5);
      const aRe = vector();
      const aIm = vector();
      const bRe = vector();
      const bIm = vector();
      const rowsOf = (re: Float64Array, im: Float64Array | null, sign: number) =>
        new Matrix(
          Array.from({ length: count }, (_, j) => [
            ...Array.from(re.subarray(j * size, (j + 1) * size)),
            ...(im ? Array.from(im.subarray(j * size, (j + 1) * size), (x) => sign * x) : []),
          ]),
        );
      for (const [sign, complex] of [
        [1, true],
        [-1, true],
        [1, false],
      ] as const) {
        const out = new Float64Array(count * count);
        blockedPairSums(aRe, complex ? aIm : null, bRe, complex ? bIm : null, sign, count, size, out);
        const reference = rowsOf(aRe, complex ? aIm : null, sign).mmul(rowsOf(bRe, complex ? bIm : null, 1).transpose());
        for (let j = 0; j < count; j++) {
          for (let l = 0; l <= j; l++) {
            expect(Math.abs(out[j * count + l] - reference.get(j, l))).toBeLessThan(1e-12);
            expect(out[l * count + j]).toBe(out[j * count + l]);
          }
        }
      }
    }
  });
});
