// ml-matrix for the solver's modules, loaded with require(). Its ES-module entry re-exports a 150 kB CommonJS file,
// which Node 20's ES-module loader scans for export names at every process start (about 60 ms of a fresh `solve`);
// require() loads the same file without that scan. Import ml-matrix from here, not from 'ml-matrix', in code that
// a command loads at start (test/cli/lazy-imports.test.ts checks the solve path).
import { createRequire } from 'node:module';
import type * as MlMatrix from 'ml-matrix';

const mlMatrix = createRequire(import.meta.url)('ml-matrix') as typeof MlMatrix;

export const { CholeskyDecomposition, EigenvalueDecomposition, Matrix, QrDecomposition, SingularValueDecomposition, pseudoInverse, solve } =
  mlMatrix;
export type CholeskyDecomposition = MlMatrix.CholeskyDecomposition;
export type EigenvalueDecomposition = MlMatrix.EigenvalueDecomposition;
export type Matrix = MlMatrix.Matrix;
export type QrDecomposition = MlMatrix.QrDecomposition;
export type SingularValueDecomposition = MlMatrix.SingularValueDecomposition;
