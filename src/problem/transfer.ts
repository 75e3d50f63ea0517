// A validated problem sent to another thread: structured cloning keeps every field and typed array but not the
// ComplexMatrix class, so the receiver rewraps the matrices (no copy, no second validation: at d = 256 reading the
// problem again cost about as much as a 1 s time limit).
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { Problem } from './model.js';

/** The fields of a ComplexMatrix that survive structured cloning. */
type ClonedMatrix = Pick<ComplexMatrix, 'rows' | 'cols' | 're' | 'im'>;

function matrixFromClone(m: ClonedMatrix): ComplexMatrix {
  return m instanceof ComplexMatrix ? m : new ComplexMatrix(m.rows, m.cols, m.re, m.im);
}

/** The problem a structured clone of a validated Problem describes, with its matrices as ComplexMatrix again. */
export function problemFromClone(clone: Problem): Problem {
  const problem: Problem = {
    ...clone,
    constraints: clone.constraints.map((c) => ({ ...c, operator: matrixFromClone(c.operator) })),
    branches: clone.branches.map((b) => ({
      ...b,
      krausOperators: b.krausOperators.map(matrixFromClone),
      keyProjectors: b.keyProjectors.map(matrixFromClone),
    })),
  };
  if (clone.sourceMarginal !== undefined) problem.sourceMarginal = matrixFromClone(clone.sourceMarginal);
  return problem;
}
