// Outside references for the margin's charges: matrix functions from ml-matrix's symmetric eigendecomposition of the
// real embedding, operator norms from mathjs eigenvalues.
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { adjoint, ComplexMatrix, multiply } from '../../src/linear-algebra/complex-matrix.js';
import { referenceEigenvalues } from '../oracle/reference.js';

/** f(H) for Hermitian H from ml-matrix's symmetric eigendecomposition of [[Re H, −Im H], [Im H, Re H]] (a *-homomorphism). */
export function referenceFunction(h: ComplexMatrix, f: (t: number) => number): ComplexMatrix {
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
  const e = new EigenvalueDecomposition(embedded, { assumeSymmetric: true });
  const v = e.eigenvectorMatrix;
  const applied = v.mmul(Matrix.diag(e.realEigenvalues.map(f))).mmul(v.transpose());
  const out = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      out.re[i * n + j] = applied.get(i, j);
      out.im[i * n + j] = applied.get(i + n, j);
    }
  }
  return out;
}

/** Largest singular value from mathjs eigenvalues of A·A†. */
export function operatorNorm(a: ComplexMatrix): number {
  return Math.sqrt(Math.max(0, ...referenceEigenvalues(multiply(a, adjoint(a)))));
}
