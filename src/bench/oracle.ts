// Benchmarks of the semidefinite linear oracle: median wall time of minimize() on random constraint sets.
import { ComplexMatrix, kron, partialTraceB } from '../linear-algebra/complex-matrix.js';
import { LinearOracle, type OracleConstraint } from '../oracle/index.js';
import { reduceProblem } from '../problem/inactive-bounds.js';
import { benchDensity, benchHermitian, uniformSource, type BenchTable } from './inputs.js';
import { randomModel, randomModelTraits } from './random-models.js';


/** Wall-time budget per measured cell; repetitions adapt to it. */
const CELL_BUDGET_MS = 1500;
/** Fewest timed calls per cell (the median is taken over them). */
const MIN_CALLS = 5;
/** Untimed calls first, so the JIT has compiled the hot loops. */
const WARMUP_CALLS = 3;
/** Half-width of the interval constraints around the reference state's values. */
const INTERVAL_HALF_WIDTH = 0.02;
/** Every third constraint is an equality, the others two-sided intervals. */
const EQUALITY_EVERY = 3;
/** Half-width of the joint-table intervals in the structured cases. */
const TABLE_TOLERANCE = 0.001;
/** (d_A, d_B) of the structured cases. */
const STRUCTURED_CASES: readonly (readonly [number, number])[] = [
  [2, 2],
  [4, 2],
  [4, 3],
  [4, 4],
];

/** Random full-rank density operator, half B·B†/Tr(B·B†) and half 1/n (keeps it well inside the cone). */
function benchState(n: number, rng: () => number): ComplexMatrix {
  const rho = benchDensity(n, rng);
  for (let t = 0; t < n * n; t++) {
    rho.re[t] *= 0.5;
    rho.im[t] *= 0.5;
  }
  for (let i = 0; i < n; i++) rho.re[i * n + i] += 0.5 / n;
  return rho;
}

function benchConstraints(n: number, count: number, rng: () => number): OracleConstraint[] {
  const rho = benchState(n, rng);
  const constraints: OracleConstraint[] = [];
  for (let i = 0; i < count; i++) {
    const operator = benchHermitian(n, rng);
    let value = 0;
    for (let t = 0; t < n * n; t++) value += operator.re[t] * rho.re[t] + operator.im[t] * rho.im[t];
    const equality = i % EQUALITY_EVERY === 0;
    constraints.push({
      label: `constraint-${i}`,
      operator,
      lower: equality ? value : value - INTERVAL_HALF_WIDTH,
      upper: equality ? value : value + INTERVAL_HALF_WIDTH,
    });
  }
  return constraints;
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
}

/** Cases named in the oracle brief: typical Frank–Wolfe sizes first, then the large ones. */
const CASES: readonly (readonly [number, number])[] = [
  [4, 3],
  [8, 20],
  [12, 40],
  [32, 40],
  [64, 100],
];

/**
 * A prepare-and-measure shaped constraint set on H_A ⊗ H_B: Alice's marginal fixed by d_A² equalities (a Hermitian
 * operator basis ⊗ 1_B) and a computational-basis joint table p(x, y) ± tolerance, which repeats the marginal's
 * diagonal (redundant by design). Operators are sparse.
 */
function structuredConstraints(dA: number, dB: number, rng: () => number): OracleConstraint[] {
  const rho = benchState(dA * dB, rng);
  const marginal = partialTraceB(rho, dA, dB);
  const identityB = ComplexMatrix.identity(dB);
  const constraints: OracleConstraint[] = [];
  for (let i = 0; i < dA; i++) {
    for (let j = i; j < dA; j++) {
      const parts: [ComplexMatrix, number][] = [];
      if (i === j) {
        const e = new ComplexMatrix(dA, dA);
        e.re[i * dA + i] = 1;
        parts.push([e, marginal.re[i * dA + i]]);
      } else {
        const symmetric = new ComplexMatrix(dA, dA);
        symmetric.re[i * dA + j] = 1;
        symmetric.re[j * dA + i] = 1;
        parts.push([symmetric, 2 * marginal.re[i * dA + j]]);
        const antisymmetric = new ComplexMatrix(dA, dA);
        antisymmetric.im[i * dA + j] = -1;
        antisymmetric.im[j * dA + i] = 1;
        // B = −i|i⟩⟨j| + i|j⟩⟨i| has Tr(B·ρ_A) = i(ρ_ij − ρ_ji) = −2·Im ρ_ij.
        parts.push([antisymmetric, -2 * marginal.im[i * dA + j]]);
      }
      for (const [operatorA, value] of parts) {
        constraints.push({ label: `marginal-${i}${j}-${constraints.length}`, operator: kron(operatorA, identityB), lower: value, upper: value });
      }
    }
  }
  const n = dA * dB;
  for (let x = 0; x < dA; x++) {
    for (let y = 0; y < dB; y++) {
      const operator = new ComplexMatrix(n, n);
      operator.re[(x * dB + y) * n + x * dB + y] = 1;
      const value = rho.re[(x * dB + y) * n + x * dB + y];
      constraints.push({ label: `table-${x}${y}`, operator, lower: value - TABLE_TOLERANCE, upper: value + TABLE_TOLERANCE });
    }
  }
  return constraints;
}

interface CaseMeasurement {
  cells: (string | number)[];
}

function measure(n: number, constraints: OracleConstraint[], rng: () => number): CaseMeasurement {
  const setupStart = performance.now();
  const oracle = new LinearOracle(n, constraints);
  const setupMs = performance.now() - setupStart;
  const feasibleStart = performance.now();
  const feasible = oracle.findFeasiblePoint();
  const feasibleMs = performance.now() - feasibleStart;
  const gradients = Array.from({ length: 8 }, () => benchHermitian(n, rng));
  for (let k = 0; k < WARMUP_CALLS; k++) oracle.minimize(gradients[k % gradients.length]);
  const times: number[] = [];
  let iterations = 0;
  let worstGap = 0;
  let optimal = 0;
  const cellStart = performance.now();
  while (times.length < MIN_CALLS || performance.now() - cellStart < CELL_BUDGET_MS) {
    const G = gradients[times.length % gradients.length];
    const started = performance.now();
    const result = oracle.minimize(G);
    times.push(performance.now() - started);
    iterations += result.iterations;
    if (result.status === 'OPTIMAL') optimal++;
    worstGap = Math.max(worstGap, (result.primalValue - result.dualBound) / (1 + Math.abs(result.primalValue)));
  }
  return {
    cells: [
      Number(median(times).toFixed(3)),
      Number((iterations / times.length).toFixed(1)),
      `${optimal}/${times.length}`,
      Number(worstGap.toExponential(1)),
      Number(feasibleMs.toFixed(2)),
      feasible.status,
      Number(setupMs.toFixed(2)),
    ],
  };
}

const MEASURED_COLUMNS = [
  'median ms / minimize',
  'IPM iterations',
  'OPTIMAL',
  'worst relative gap',
  'findFeasiblePoint ms',
  'feasibility',
  'constructor ms',
];

/** [[Re A, −Im A], [Im A, Re A]]: the real symmetric embedding of a Hermitian A (each eigenvalue twice). */
function realEmbedding(a: ComplexMatrix): ComplexMatrix {
  const n = a.rows;
  const out = new ComplexMatrix(2 * n, 2 * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      out.re[i * 2 * n + j] = a.re[i * n + j];
      out.re[(i + n) * 2 * n + j + n] = a.re[i * n + j];
      out.re[i * 2 * n + j + n] = -a.im[i * n + j];
      out.re[(i + n) * 2 * n + j] = a.im[i * n + j];
    }
  }
  return out;
}

/** Median ms per minimize() over a cell budget, after warm-up, for fixed gradients. */
function medianMinimizeMs(oracle: LinearOracle, gradients: ComplexMatrix[]): { ms: number; optima: number[] } {
  const optima = gradients.map((G) => oracle.minimize(G).primalValue);
  const times: number[] = [];
  const cellStart = performance.now();
  while (times.length < MIN_CALLS || performance.now() - cellStart < CELL_BUDGET_MS) {
    const G = gradients[times.length % gradients.length];
    const started = performance.now();
    oracle.minimize(G);
    times.push(performance.now() - started);
  }
  return { ms: median(times), optima };
}

/** Cases for the native-complex versus real-embedding comparison. */
const EMBEDDING_CASES: readonly (readonly [number, number])[] = [
  [4, 3],
  [8, 20],
  [12, 40],
];

/** Random-suite sizes for the dense-versus-tensor comparison, with the timed calls per path (after one warm-up). */
const TABLE_CASES: readonly (readonly [number, number])[] = [
  [16, 5],
  [32, 3],
  [64, 2],
];

/** Constructor + feasibility + median minimize() wall ms of one oracle on fixed gradients. */
function timeOracle(n: number, constraints: OracleConstraint[], tensorStructure: boolean, gradients: ComplexMatrix[], calls: number) {
  let started = performance.now();
  const oracle = new LinearOracle(n, constraints, { tensorStructure });
  const setupMs = performance.now() - started;
  started = performance.now();
  oracle.findFeasiblePoint();
  const feasibleMs = performance.now() - started;
  oracle.minimize(gradients[0]);
  const times: number[] = [];
  const optima: number[] = [];
  for (let k = 0; k < calls; k++) {
    started = performance.now();
    optima.push(oracle.minimize(gradients[1 + k]).primalValue);
    times.push(performance.now() - started);
  }
  return { setupMs, feasibleMs, ms: median(times), optima, assembly: oracle.schurAssembly };
}

/**
 * The random suite's first model without face equalities at each size (POVM tables, marginals: all P ⊗ Q),
 * restricted as the solver does, with the dense and the tensor-product Schur complement.
 */
function tableComparisonRows(): (string | number)[][] {
  const out: (string | number)[][] = [];
  for (const [d, calls] of TABLE_CASES) {
    let seed = 1;
    while (randomModelTraits(d, seed).face) seed++;
    const model = randomModel(d, seed);
    const { face, restricted } = reduceProblem(model.problem);
    const rng = uniformSource(31 * d + seed);
    const gradients = Array.from({ length: calls + 1 }, () => benchHermitian(face.dimension, rng));
    const dense = timeOracle(face.dimension, restricted.constraints, false, gradients, calls);
    const tensor = timeOracle(face.dimension, restricted.constraints, true, gradients, calls);
    out.push([
      model.name,
      restricted.constraints.length,
      tensor.assembly,
      Number(dense.ms.toFixed(1)),
      Number(tensor.ms.toFixed(1)),
      Number((dense.ms / tensor.ms).toFixed(2)),
      Number(dense.feasibleMs.toFixed(0)),
      Number(tensor.feasibleMs.toFixed(0)),
      Number(tensor.setupMs.toFixed(0)),
      Number(Math.max(...dense.optima.map((v, k) => Math.abs(v - tensor.optima[k]) / (1 + Math.abs(v)))).toExponential(1)),
    ]);
  }
  return out;
}

export async function benchOracle(): Promise<BenchTable[]> {
  const tableRows = tableComparisonRows();
  const embeddingRows: (string | number)[][] = [];
  for (const [n, count] of EMBEDDING_CASES) {
    const rng = uniformSource(2000 * n + count);
    const constraints = benchConstraints(n, count, rng);
    const gradients = Array.from({ length: 8 }, () => benchHermitian(n, rng));
    const complex = medianMinimizeMs(new LinearOracle(n, constraints), gradients);
    const embedded = medianMinimizeMs(
      new LinearOracle(
        2 * n,
        constraints.map((c) => ({ ...c, operator: realEmbedding(c.operator) })),
      ),
      gradients.map(realEmbedding),
    );
    embeddingRows.push([
      n,
      count,
      Number(complex.ms.toFixed(3)),
      Number(embedded.ms.toFixed(3)),
      Number((embedded.ms / complex.ms).toFixed(2)),
      Number(Math.max(...complex.optima.map((v, k) => Math.abs(v - embedded.optima[k]))).toExponential(1)),
    ]);
  }

  const structuredRows: (string | number)[][] = [];
  for (const [dA, dB] of STRUCTURED_CASES) {
    const rng = uniformSource(77 * dA + dB);
    const constraints = structuredConstraints(dA, dB, rng);
    const { cells } = measure(dA * dB, constraints, rng);
    structuredRows.push([`${dA}×${dB} = ${dA * dB}`, `${dA * dA} marginal eq + ${dA * dB} table intervals`, ...cells]);
  }

  const rows: (string | number)[][] = [];
  for (const [n, count] of CASES) {
    const rng = uniformSource(1000 * n + count);
    const constraints = benchConstraints(n, count, rng);
    const equalities = constraints.filter((c) => c.lower === c.upper).length;
    const { cells } = measure(n, constraints, rng);
    rows.push([n, `${count} (${equalities} eq, ${count - equalities} interval)`, ...cells]);
  }
  return [
    {
      title: 'Linear oracle: minimize() on random dense Hermitian constraints around a full-rank state (relative accuracy 1e-7)',
      columns: ['d', 'constraints', ...MEASURED_COLUMNS],
      rows,
    },
    {
      title: 'Linear oracle: prepare-and-measure shaped constraints (sparse; source marginal + redundant joint table ± 0.001)',
      columns: ['d_A×d_B', 'constraints', ...MEASURED_COLUMNS],
      rows: structuredRows,
    },
    {
      title: 'Linear oracle: native complex d×d versus the real 2d×2d embedding (real-arithmetic path), same random problems',
      columns: ['d', 'constraints', 'native complex ms', 'real embedding ms', 'embedding / native', 'largest optimum difference'],
      rows: embeddingRows,
    },
    {
      title: 'Linear oracle: random-suite POVM tables (tensor products), dense versus tensor-product Schur complement (relative accuracy 1e-7)',
      columns: [
        'model',
        'constraints',
        'assembly chosen',
        'dense ms / minimize',
        'tensor ms / minimize',
        'speed-up',
        'dense findFeasiblePoint ms',
        'tensor findFeasiblePoint ms',
        'tensor constructor ms',
        'largest relative optimum difference',
      ],
      rows: tableRows,
    },
  ];
}
