// Outside references for the margin's charges: matrix functions from ml-matrix's symmetric eigendecomposition of the
// real embedding, operator norms from mathjs eigenvalues.
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { addScaledInPlace, adjoint, ComplexMatrix, conjugate, multiply } from '../../src/linear-algebra/complex-matrix.js';
import { referenceEigenvalues } from '../oracle/reference.js';

/** The real embedding [[Re H, −Im H], [Im H, Re H]] of a Hermitian H (a *-homomorphism: functions commute with it). */
function embed(h: ComplexMatrix): Matrix {
  const n = h.rows;
  const embedded = Matrix.zeros(2 * n, 2 * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = 0.5 * (h.re[i * n + j] + h.re[j * n + i]);
      const im = 0.5 * (h.im[i * n + j] - h.im[j * n + i]);
      embedded.set(i, j, re);
      embedded.set(i + n, j + n, re);
      embedded.set(i, j + n, -im);
      embedded.set(i + n, j, im);
    }
  }
  return embedded;
}

/** The complex matrix whose real embedding is `m` (its top-left and bottom-left blocks). */
function unembed(m: Matrix, n: number): ComplexMatrix {
  const out = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      out.re[i * n + j] = m.get(i, j);
      out.im[i * n + j] = m.get(i + n, j);
    }
  }
  return out;
}

/**
 * The Fréchet derivative Df(Y)[H] = U(Γ ∘ U†HU)U† (Daleckii–Krein; Bhatia, Matrix Analysis, ch. V) with U from
 * ml-matrix's symmetric eigendecomposition of the embedding and Γ_ij = `divided`(λ_i, λ_j) given by the caller.
 */
export function referenceDerivative(y: ComplexMatrix, h: ComplexMatrix, divided: (a: number, b: number) => number): ComplexMatrix {
  const e = new EigenvalueDecomposition(embed(y), { assumeSymmetric: true });
  const v = e.eigenvectorMatrix;
  const values = e.realEigenvalues;
  const rotated = v.transpose().mmul(embed(h)).mmul(v);
  for (let i = 0; i < values.length; i++) {
    for (let j = 0; j < values.length; j++) rotated.set(i, j, rotated.get(i, j) * divided(values[i], values[j]));
  }
  return unembed(v.mmul(rotated).mmul(v.transpose()), y.rows);
}

/** f(H) for Hermitian H from ml-matrix's symmetric eigendecomposition of [[Re H, −Im H], [Im H, Re H]] (a *-homomorphism). */
export function referenceFunction(h: ComplexMatrix, f: (t: number) => number): ComplexMatrix {
  const e = new EigenvalueDecomposition(embed(h), { assumeSymmetric: true });
  const v = e.eigenvectorMatrix;
  return unembed(v.mmul(Matrix.diag(e.realEigenvalues.map(f))).mmul(v.transpose()), h.rows);
}

/** Largest singular value from mathjs eigenvalues of A·A†. */
export function operatorNorm(a: ComplexMatrix): number {
  return Math.sqrt(Math.max(0, ...referenceEigenvalues(multiply(a, adjoint(a)))));
}

/** (f(ρ + hD) − f(ρ − hD))/(2h) for D = W·d·W† (a direction d given in the basis W): central differences, common practice. */
export function centralSlope(f: (rho: ComplexMatrix) => number, point: ComplexMatrix, basis: ComplexMatrix, direction: ComplexMatrix, step: number): number {
  const lifted = conjugate(basis, direction);
  const plus = point.clone();
  addScaledInPlace(plus, lifted, step);
  const minus = point.clone();
  addScaledInPlace(minus, lifted, -step);
  return (f(plus) - f(minus)) / (2 * step);
}
