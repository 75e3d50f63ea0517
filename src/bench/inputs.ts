// Shared pieces of the benchmarks: the table shape and deterministic inputs (same matrices on every run).
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';

export interface BenchTable {
  title: string;
  columns: string[];
  rows: (string | number)[][];
}

/** Deterministic uniform numbers in [0, 1) (a 32-bit mixing generator). */
export function uniformSource(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Random Hermitian matrix with entries uniform in [−1, 1] + i[−1, 1]. */
export function benchHermitian(n: number, rng: () => number): ComplexMatrix {
  const a = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    a.re[i * n + i] = 2 * rng() - 1;
    for (let j = 0; j < i; j++) {
      const re = 2 * rng() - 1;
      const im = 2 * rng() - 1;
      a.set(i, j, re, im);
      a.set(j, i, re, -im);
    }
  }
  return a;
}

/** Random full-rank density operator B·B†/Tr(B·B†) with B a random Hermitian matrix. */
export function benchDensity(n: number, rng: () => number): ComplexMatrix {
  const b = benchHermitian(n, rng);
  const rho = new ComplexMatrix(n, n);
  let trace = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < n; k++) {
        // B_ik · conj(B_jk)
        sr += b.re[i * n + k] * b.re[j * n + k] + b.im[i * n + k] * b.im[j * n + k];
        si += b.im[i * n + k] * b.re[j * n + k] - b.re[i * n + k] * b.im[j * n + k];
      }
      rho.re[i * n + j] = sr;
      rho.im[i * n + j] = si;
    }
    trace += rho.re[i * n + i];
  }
  for (let t = 0; t < n * n; t++) {
    rho.re[t] /= trace;
    rho.im[t] /= trace;
  }
  return rho;
}
