// Conversions between ComplexMatrix and mathjs matrices, for reference computations in tests.
import * as math from 'mathjs';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';

export function toMathjs(a: ComplexMatrix): math.Matrix {
  const rows = Array.from({ length: a.rows }, (_, i) =>
    Array.from({ length: a.cols }, (_, j) => math.complex(a.re[i * a.cols + j], a.im[i * a.cols + j])),
  );
  return math.matrix(rows);
}

export function fromMathjs(m: math.Matrix | math.MathArray): ComplexMatrix {
  const rows = (math.isMatrix(m) ? (m.toArray() as unknown[][]) : (m as unknown[][])) as (number | math.Complex)[][];
  const out = new ComplexMatrix(rows.length, rows.length === 0 ? 0 : rows[0].length);
  rows.forEach((row, i) =>
    row.forEach((x, j) => {
      if (typeof x === 'number') out.set(i, j, x, 0);
      else out.set(i, j, x.re, x.im);
    }),
  );
  return out;
}
