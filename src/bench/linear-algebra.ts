// Benchmarks of the Hermitian eigensolvers and matrix-function kernels (median CPU time per call).
import { ComplexMatrix, multiply } from '../linear-algebra/complex-matrix.js';
import { eigh, eighHouseholder, eigvalsh } from '../linear-algebra/eigen.js';
import { eighJacobi, eighRealEmbedding } from './reference-eigensolvers.js';
import { benchHermitian, uniformSource, type BenchTable } from './inputs.js';
import { dividedDifferences, frechetDerivative, powerFunction, spectralFunction } from '../linear-algebra/matrix-functions.js';


/** Wall-time budget per measured cell; repetitions adapt to it. */
const CELL_BUDGET_MS = 250;
/** Fewest timed batches per cell (the median is taken over them). */
const MIN_BATCHES = 7;
/** Untimed warm-up per cell, so that the JIT has optimised the code for this size before timing. */
const WARM_UP_MS = 150;
const MIN_WARM_UP_CALLS = 2;

/** Random positive-definite matrix G·G†/n + 0.1·1. */
function benchPositiveDefinite(n: number, seed: number): ComplexMatrix {
  const g = benchHermitian(n, uniformSource(seed));
  const a = multiply(g, g);
  for (let i = 0; i < n; i++) a.re[i * n + i] = a.re[i * n + i] / n + 0.1;
  for (let k = 0; k < n * n; k++) if (k % (n + 1) !== 0) {
    a.re[k] /= n;
    a.im[k] /= n;
  }
  return a;
}

/** Median CPU milliseconds per call of `work`, after a warm-up, over adaptive batches. */
export function medianMilliseconds(work: () => void): number {
  const warmStart = performance.now();
  let warmCalls = 0;
  while (performance.now() - warmStart < WARM_UP_MS || warmCalls < MIN_WARM_UP_CALLS) {
    work();
    warmCalls++;
  }
  // Estimate the per-call time from a short run after the warm-up (the warm-up includes compilation).
  const probeStart = performance.now();
  let probeCalls = 0;
  while (performance.now() - probeStart < CELL_BUDGET_MS / 20 || probeCalls < 3) {
    work();
    probeCalls++;
  }
  const perCall = (performance.now() - probeStart) / probeCalls;
  const perBatch = Math.max(1, Math.floor(CELL_BUDGET_MS / MIN_BATCHES / Math.max(perCall, 1e-6)));
  const times: number[] = [];
  for (let b = 0; b < MIN_BATCHES; b++) {
    // CPU time of this process: on a shared machine wall time also counts other processes' slices.
    const t0 = process.cpuUsage();
    for (let k = 0; k < perBatch; k++) work();
    const used = process.cpuUsage(t0);
    times.push((used.user + used.system) / 1000 / perBatch);
  }
  times.sort((x, y) => x - y);
  return times[Math.floor(times.length / 2)];
}

function round(ms: number): number {
  return Number(ms.toPrecision(3));
}

/** Eigensolver timings (median ms per call) and matrix-function kernels. */
export type { BenchTable };

export async function benchLinearAlgebra(): Promise<BenchTable[]> {
  // Process-wide warm-up so that the first measured cell is not charged for compilation.
  for (const n of [3, 8]) {
    const a = benchHermitian(n, uniformSource(n));
    for (let k = 0; k < 300; k++) {
      eigh(a);
      eighJacobi(a);
      eigvalsh(a);
    }
  }
  const solverRows: (string | number)[][] = [];
  for (const n of [4, 16, 64, 128, 256]) {
    const a = benchHermitian(n, uniformSource(1000 + n));
    const nativeOnly = n > 128;
    solverRows.push([
      n,
      round(medianMilliseconds(() => eigh(a))),
      round(medianMilliseconds(() => eigvalsh(a))),
      nativeOnly ? '—' : round(medianMilliseconds(() => eighJacobi(a))),
      round(medianMilliseconds(() => eighHouseholder(a))),
      nativeOnly ? '—' : round(medianMilliseconds(() => eighRealEmbedding(a))),
    ]);
  }
  const crossoverRows: (string | number)[][] = [];
  for (const n of [2, 3, 4, 5, 6, 8]) {
    const a = benchHermitian(n, uniformSource(2000 + n));
    const jacobi = medianMilliseconds(() => eighJacobi(a)) * 1000;
    const householder = medianMilliseconds(() => eighHouseholder(a)) * 1000;
    crossoverRows.push([n, round(jacobi), round(householder), jacobi < householder ? 'Jacobi would be faster' : 'Householder–QL']);
  }
  const kernelRows: (string | number)[][] = [];
  const f = powerFunction(0.5);
  for (const n of [4, 16, 64]) {
    const a = benchPositiveDefinite(n, 3000 + n);
    const h = benchHermitian(n, uniformSource(4000 + n));
    const eig = eigh(a);
    const gamma = dividedDifferences(eig.values, f.value, f.derivative, f.difference);
    kernelRows.push([
      n,
      round(medianMilliseconds(() => multiply(a, h))),
      round(medianMilliseconds(() => spectralFunction(eig, f.value))),
      round(medianMilliseconds(() => dividedDifferences(eig.values, f.value, f.derivative, f.difference))),
      round(medianMilliseconds(() => frechetDerivative(eig, gamma, h))),
    ]);
  }
  return [
    {
      title: 'Hermitian eigensolvers, median CPU ms per call (random complex Hermitian input)',
      columns: ['d', 'eigh (chosen path)', 'eigvalsh (values only)', 'Jacobi', 'Householder–QL', 'ml-matrix real embedding'],
      rows: solverRows,
    },
    {
      title: 'Small sizes: Jacobi vs Householder–QL, median CPU µs per call (eigh crossover)',
      columns: ['d', 'Jacobi µs', 'Householder–QL µs', 'eigh uses'],
      rows: crossoverRows,
    },
    {
      title: 'Matrix-function kernels, median CPU ms per call',
      columns: ['d', 'multiply', 'spectralFunction', 'dividedDifferences', 'frechetDerivative'],
      rows: kernelRows,
    },
  ];
}
