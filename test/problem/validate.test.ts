import { describe, expect, it } from 'vitest';
import { loadSync } from '@grpc/proto-loader';
import { ComplexMatrix, partialTraceB, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import {
  MESSAGE_FIELDS,
  ValidationError,
  elementaryHermitianBasis,
  parseProblemJson,
  problemFromJson,
} from '../../src/problem/validate.js';
import { entropyRequestFrom } from '../../src/problem/entropy-request.js';
import { matrixFromJson, matrixToJson } from '../../src/problem/json.js';
import { densityOperatorFromJson } from '../../src/problem/state.js';
import { PROBLEM_PROTO_FILE, PROTO_LOADER_OPTIONS, protoDirectory } from '../../src/problem/proto-options.js';
import { randomDensity, seededRandom } from '../helpers/random.js';

import { ERROR_Z, I4, KEY0, KEY1, P0, P1, baseProblem, real, type Json } from './fixtures.js';
import { buildExample } from '../../src/protocols/index.js';

function validationError(run: () => unknown): ValidationError {
  try {
    run();
  } catch (e) {
    if (e instanceof ValidationError) return e;
    throw e;
  }
  throw new Error('expected a ValidationError, none was thrown');
}

function rejection(mutate: (p: Json) => void, limits?: { maxDimension?: number }): ValidationError {
  const p = baseProblem();
  mutate(p);
  return validationError(() => problemFromJson(p, limits));
}

describe('problemFromJson accepts and expands', () => {
  it('keeps explicit constraints, then d_A² marginal equalities, then one constraint per table entry', () => {
    const problem = problemFromJson(baseProblem());
    expect(problem.constraints.map((c) => c.label)).toEqual([
      'qber-z',
      'sourceMarginal[0,0]',
      'sourceMarginal[1,1]',
      'sourceMarginal.re[0,1]',
      'sourceMarginal.im[0,1]',
      'zz.probabilities[0,0]',
      'zz.probabilities[0,1]',
      'zz.probabilities[1,0]',
      'zz.probabilities[1,1]',
    ]);
    const entry = problem.constraints[6];
    expect(entry.lower).toBeCloseTo(0.04, 15);
    expect(entry.upper).toBeCloseTo(0.06, 15);
    // P_0 ⊗ Q_1 = |01⟩⟨01|: the only nonzero entry is at index 0·2 + 1 (Kronecker convention, docs/math.md §1).
    expect(Array.from(entry.operator.re)).toEqual([0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0]);
    expect(problem.branches[0].score).toBe(0);
    expect(problem.sourceMarginal?.re[0]).toBe(0.5);
  });

  it('marginal equalities hold exactly for a state with that marginal (Tr((B⊗1)ρ) = Tr(B·Tr_B ρ))', () => {
    const rng = seededRandom(7);
    const rho = randomDensity(6, rng);
    const marginal = partialTraceB(rho, 3, 2);
    const p = baseProblem();
    p.dimensionA = 3;
    p.sourceMarginal = matrixToJson(marginal);
    p.constraints = [];
    p.observations = [];
    p.branches[0].krausOperators = [matrixToJson(ComplexMatrix.identity(6))];
    p.branches[0].keyProjectors = [matrixToJson(ComplexMatrix.identity(6))];
    const problem = problemFromJson(p);
    expect(problem.constraints).toHaveLength(9);
    for (const c of problem.constraints) {
      expect(c.lower).toBe(c.upper);
      expect(traceProductReal(c.operator, rho)).toBeCloseTo(c.lower, 14);
    }
  });

  it('uses a Hilbert–Schmidt orthonormal Hermitian basis that reconstructs any Hermitian matrix', () => {
    // Orthonormal basis property: A = Σ_k Tr(B_k A) B_k (linear algebra identity).
    const rng = seededRandom(11);
    const a = randomDensity(4, rng);
    const basis = elementaryHermitianBasis(4);
    expect(basis).toHaveLength(16);
    const rebuilt = new ComplexMatrix(4, 4);
    for (const { operator } of basis) {
      const coefficient = traceProductReal(operator, a);
      for (let k = 0; k < 16; k++) {
        rebuilt.re[k] += coefficient * operator.re[k];
        rebuilt.im[k] += coefficient * operator.im[k];
      }
      for (const { operator: other } of basis) {
        const expected = other === operator ? 1 : 0;
        expect(traceProductReal(operator, other)).toBeCloseTo(expected, 15);
      }
    }
    for (let k = 0; k < 16; k++) {
      expect(rebuilt.re[k]).toBeCloseTo(a.re[k], 14);
      expect(rebuilt.im[k]).toBeCloseTo(a.im[k], 14);
    }
  });

  it('accepts the proto snake_case names and the defaults a protobuf JSON writer emits', () => {
    const p = baseProblem();
    p.dimension_a = p.dimensionA;
    delete p.dimensionA;
    p.branches[0].kraus_operators = p.branches[0].krausOperators;
    delete p.branches[0].krausOperators;
    p.observations[0].povm_a = p.observations[0].povmA;
    delete p.observations[0].povmA;
    p.constraints[0].operator.im = [];
    p.entropy = 'ENTROPY_KIND_UNSPECIFIED';
    p.alpha = null;
    p.description = '';
    const parsed = parseProblemJson(p);
    expect(parsed.problem.dimensionA).toBe(2);
    expect(parsed.request).toBeUndefined();
    const withoutMarginal = baseProblem();
    withoutMarginal.sourceMarginal = null;
    expect(problemFromJson(withoutMarginal).sourceMarginal).toBeUndefined();
  });

  it('accepts an object as decoded with the shared proto-loader options (defaults filled, _alpha presence marker)', () => {
    // The shape protobufjs's toObject gives for a decoded Problem with PROTO_LOADER_OPTIONS (checked by hand).
    const decoded = {
      constraints: [],
      observations: [],
      branches: [{ krausOperators: [{ re: [1], im: [], rows: 1, cols: 1 }], keyProjectors: [{ re: [1], im: [], rows: 1, cols: 1 }], label: '', score: 0 }],
      dimensionA: 1,
      dimensionB: 1,
      sourceMarginal: null,
      entropy: 'PETZ_UP',
      description: '',
      alpha: 1.5,
      _alpha: 'alpha',
    };
    expect(parseProblemJson(decoded).request).toEqual({ kind: 'petz-up', alpha: 1.5 });
  });

  it('reads the entropy request a problem carries (enum name or number)', () => {
    const p = baseProblem();
    p.entropy = 'PETZ_UP';
    p.alpha = 1.5;
    expect(parseProblemJson(p).request).toEqual({ kind: 'petz-up', alpha: 1.5 });
    p.entropy = 1;
    p.alpha = undefined;
    expect(parseProblemJson(p).request).toEqual({ kind: 'von-neumann' });
  });

  it('reads the same field names as problem.proto declares, for every message', () => {
    const definition = loadSync(PROBLEM_PROTO_FILE, { ...PROTO_LOADER_OPTIONS, includeDirs: [protoDirectory()] });
    for (const [message, fields] of Object.entries(MESSAGE_FIELDS)) {
      const type = (definition[`renyibound.v1.${message}`] as unknown as { type: { field: { name: string }[] } }).type;
      expect(type.field.map((f) => f.name), message).toEqual([...fields]);
    }
  });
});

describe('matrix JSON', () => {
  it('round-trips and omits im for real matrices', () => {
    const m = ComplexMatrix.from([
      [1, [2, -3]],
      [[2, 3], -0],
    ]);
    const json = matrixToJson(m);
    expect(json).toEqual({ rows: 2, cols: 2, re: [1, 2, 2, 0], im: [0, -3, 3, 0] });
    expect(matrixToJson(matrixFromJson(json, 'm'))).toEqual(json);
    expect(matrixToJson(ComplexMatrix.identity(2))).toEqual({ rows: 2, cols: 2, re: [1, 0, 0, 1] });
  });

  it('accepts numeric strings as the protobuf JSON mapping allows', () => {
    expect(Array.from(matrixFromJson({ rows: '1', cols: 1, re: ['0.25'] }, 'm').re)).toEqual([0.25]);
  });
});

// One test per validation message: the table pins the exact text (field: reason).
const MAX_256 = undefined;
const rejections: [string, (p: Json) => void, string][] = [
  ['not an object', (p) => Object.assign(p, { __replace: true }), 'problem: must be a JSON object'],
  ['unknown field', (p) => (p.dimensionC = 2), 'dimensionC: unknown field (expected one of dimensionA, dimensionB, sourceMarginal, constraints, observations, branches, entropy, alpha, description, honestStatistics)'],
  ['field given twice', (p) => (p.dimension_a = 2), 'dimensionA: given twice (as dimensionA and dimension_a)'],
  ['missing dimension', (p) => delete p.dimensionA, 'dimensionA: is required'],
  ['fractional dimension', (p) => (p.dimensionA = 1.5), 'dimensionA: must be a nonnegative integer (got 1.5)'],
  ['zero dimension', (p) => (p.dimensionB = 0), 'dimensionB: must be at least 1'],
  ['dimension above the maximum', (p) => (p.dimensionA = 300), 'dimensionA: 300 exceeds the maximum dimension 256'],
  ['repeated field not an array', (p) => (p.constraints = {}), 'constraints: must be a JSON array'],
  ['message not an object', (p) => (p.constraints[0].operator = [1]), 'constraints[0].operator: must be a JSON object'],
  ['label not a string', (p) => (p.constraints[0].label = 3), 'constraints[0].label: must be a string'],
  ['matrix rows zero', (p) => (p.constraints[0].operator.rows = 0), 'constraints[0].operator.rows: must be at least 1'],
  ['matrix cols zero', (p) => (p.constraints[0].operator.cols = 0), 'constraints[0].operator.cols: must be at least 1'],
  ['matrix re too short', (p) => p.constraints[0].operator.re.pop(), 'constraints[0].operator.re: must hold rows·cols = 16 numbers, got 15'],
  ['matrix re not an array', (p) => (p.constraints[0].operator.re = 'x'), 'constraints[0].operator.re: must be a JSON array of numbers'],
  ['matrix entry NaN', (p) => (p.constraints[0].operator.re[3] = 'NaN'), 'constraints[0].operator.re[3]: must be a finite number (got NaN)'],
  ['matrix entry Infinity', (p) => (p.constraints[0].operator.im = Array(16).fill(0).map((_, k) => (k === 2 ? 'Infinity' : 0))), 'constraints[0].operator.im[2]: must be a finite number (got Infinity)'],
  ['matrix entry not a number', (p) => (p.constraints[0].operator.re[3] = 'abc'), 'constraints[0].operator.re[3]: must be a number (got "abc")'],
  ['operator of the wrong shape', (p) => (p.constraints[0].operator = P0), 'constraints[0].operator: must be 4×4 (dimensionA·dimensionB square), got 2×2'],
  ['operator not Hermitian', (p) => (p.constraints[0].operator.re[1] = 1), 'constraints[0].operator: must be Hermitian (relative non-Hermitian part 5.77e-1 exceeds 1e-9)'],
  ['bound of the wrong type', (p) => (p.constraints[0].upper = [1]), 'constraints[0].upper: must be a number (got an array)'],
  ['bound not finite', (p) => (p.constraints[0].lower = '-Infinity'), 'constraints[0].lower: must be a finite number (got -Infinity)'],
  ['lower above upper', (p) => (p.constraints[0].lower = 0.2), 'constraints[0].lower: must not exceed upper (0.2 > 0.1)'],
  ['marginal of the wrong shape', (p) => (p.sourceMarginal = I4), 'sourceMarginal: must be 2×2, got 4×4'],
  ['marginal not Hermitian', (p) => (p.sourceMarginal.im = [0, 0.1, 0.1, 0]), 'sourceMarginal: must be Hermitian (relative non-Hermitian part 2.77e-1 exceeds 1e-9)'],
  ['marginal not positive semidefinite', (p) => (p.sourceMarginal.re = [1.5, 0, 0, -0.5]), 'sourceMarginal: must be positive semidefinite (smallest eigenvalue -5.000e-1)'],
  ['marginal trace not 1', (p) => (p.sourceMarginal.re = [0.5, 0, 0, 0.6]), 'sourceMarginal: must have trace 1 (got 1.1)'],
  ['empty POVM', (p) => (p.observations[0].povmB = []), 'observations[0].povmB: must hold at least one POVM element'],
  ['POVM element of the wrong shape', (p) => (p.observations[0].povmA[1] = I4), 'observations[0].povmA[1]: must be 2×2 (dimensionA square), got 4×4'],
  ['POVM element not Hermitian', (p) => (p.observations[0].povmA[1] = real(2, 2, [0, 1, 0, 1])), 'observations[0].povmA[1]: must be Hermitian (relative non-Hermitian part 7.07e-1 exceeds 1e-9)'],
  ['POVM element not positive semidefinite', (p) => (p.observations[0].povmA = [real(2, 2, [1, 0, 0, 2]), real(2, 2, [0, 0, 0, -1])]), 'observations[0].povmA[1]: must be positive semidefinite (smallest eigenvalue -1.000e+0)'],
  ['POVM not summing to the identity', (p) => (p.observations[0].povmB[1] = real(2, 2, [0, 0, 0, 0.9])), 'observations[0].povmB: elements must sum to the identity (largest deviation 1.00e-1 exceeds 1e-9)'],
  ['table of the wrong size', (p) => p.observations[0].probabilities.pop(), 'observations[0].probabilities: must hold |povmA|·|povmB| = 4 entries (row-major), got 3'],
  ['negative probability', (p) => (p.observations[0].probabilities = [0.5, -0.05, 0.05, 0.5]), 'observations[0].probabilities[1]: must be nonnegative (got -0.05)'],
  ['NaN probability', (p) => (p.observations[0].probabilities[2] = 'NaN'), 'observations[0].probabilities[2]: must be a finite number (got NaN)'],
  ['probabilities not summing to 1', (p) => (p.observations[0].probabilities = [0.4, 0.05, 0.05, 0.4]), 'observations[0].probabilities: must sum to 1 within 0.040000001 (sum 0.9)'],
  ['negative tolerance', (p) => (p.observations[0].tolerance = -0.01), 'observations[0].tolerance: must be nonnegative (got -0.01)'],
  ['no branches', (p) => (p.branches = []), 'branches: must hold at least one announcement branch'],
  ['branch without Kraus operators', (p) => (p.branches[0].krausOperators = []), 'branches[0].krausOperators: must hold at least one Kraus operator'],
  ['Kraus operator with the wrong input dimension', (p) => (p.branches[0].krausOperators = [P0]), 'branches[0].krausOperators[0]: must have dimensionA·dimensionB = 4 columns, got 2'],
  ['Kraus operators with different output dimensions', (p) => (p.branches[0].krausOperators = [I4, real(1, 4, [0, 0, 0, 0])]), 'branches[0].krausOperators[1]: has 1 rows but krausOperators[0] has 4 (a branch maps into one output space)'],
  ['branch output dimension above the maximum', (p) => (p.branches[0].krausOperators = [real(5, 4, Array(20).fill(0))]), 'branches[0].krausOperators[0]: output dimension 5 exceeds the maximum 4'],
  ['branch without key projectors', (p) => (p.branches[0].keyProjectors = []), 'branches[0].keyProjectors: must hold at least one projector (a single identity means no key)'],
  ['key projector of the wrong shape', (p) => (p.branches[0].keyProjectors[0] = P0), 'branches[0].keyProjectors[0]: must be 4×4 (the Kraus operators’ output dimension square), got 2×2'],
  ['key projector not Hermitian', (p) => (p.branches[0].keyProjectors[1].im = [0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0.5, 0, 0, 0.5, 0]), 'branches[0].keyProjectors[1]: must be Hermitian (relative non-Hermitian part 6.32e-1 exceeds 1e-9)'],
  ['key projector not idempotent', (p) => (p.branches[0].keyProjectors = [real(4, 4, [0.5, 0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0.5]), real(4, 4, [0.5, 0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0.5])]), 'branches[0].keyProjectors[0]: must be an orthogonal projector (P² − P has an entry of size 2.50e-1, tolerance 1e-9)'],
  ['key projectors not summing to the identity', (p) => (p.branches[0].keyProjectors = [KEY0]), 'branches[0].keyProjectors: must sum to the identity on the branch output (largest deviation 1.00e+0 exceeds 1e-9)'],
  ['incomplete branch set', (p) => (p.branches[0].krausOperators = [KEY0]), 'branches: Σ K†K over all Kraus operators of all branches must equal the identity (largest deviation 1.00e+0 exceeds 1e-9); add the missing outcomes as a branch with a single key projector, since an incomplete set overstates Rényi entropies'],
  ['score not finite', (p) => (p.branches[0].score = 'NaN'), 'branches[0].score: must be a finite number (got NaN)'],
  ['unknown entropy kind', (p) => (p.entropy = 'renyi'), 'entropy: unknown entropy kind "renyi" (expected one of von-neumann, petz-up, petz-down, sandwiched-up)'],
  ['entropy not a string', (p) => (p.entropy = true), 'entropy: must be a string naming an entropy kind'],
  ['alpha without an entropy kind', (p) => (p.alpha = 1.5), 'alpha: given without an entropy kind'],
  ['alpha outside (1, 2] in the problem', (p) => Object.assign(p, { entropy: 'SANDWICHED_UP', alpha: 2.5 }), 'alpha: must lie in (1, 2] for sandwiched-up; Rényi objectives are not convex outside it'],
  ['bad presence marker', (p) => (p._alpha = 'beta'), '_alpha: must be "alpha" when present (the presence marker of alpha)'],
  ['description not a string', (p) => (p.description = 5), 'description: must be a string'],
];

describe('problemFromJson rejects with the field path and reason', () => {
  it.each(rejections)('%s', (name, mutate, message) => {
    const limits = name === 'branch output dimension above the maximum' ? { maxDimension: 4 } : MAX_256;
    const error =
      name === 'not an object'
        ? validationError(() => problemFromJson([1, 2]))
        : rejection(mutate, limits);
    expect(error.message).toBe(message);
    expect(message.startsWith(`${error.field}: `)).toBe(true);
    expect(error.reason).toBe(message.slice(error.field.length + 2));
  });

  it('joint dimension above a configured maximum', () => {
    expect(rejection(() => {}, { maxDimension: 3 }).message).toBe(
      'dimensionB: dimensionA·dimensionB = 4 exceeds the maximum joint dimension 3',
    );
  });

  it('accepts a table that misses 1 by no more than its tolerances allow', () => {
    const p = baseProblem();
    p.observations[0].probabilities = [0.44, 0.05, 0.05, 0.44]; // sum 0.98, allowance 4·0.01
    expect(() => problemFromJson(p)).not.toThrow();
  });

  it('accepts rounding-level defects below the tolerances', () => {
    const p = baseProblem();
    p.constraints[0].operator.re[1] = 1e-12; // relative non-Hermitian part 5e-13
    p.branches[0].keyProjectors[0].re[0] = 1 + 1e-12;
    expect(() => problemFromJson(p)).not.toThrow();
  });
});

describe('entropyRequestFrom', () => {
  it('accepts the kinds by name and by proto enum name', () => {
    expect(entropyRequestFrom('von-neumann')).toEqual({ kind: 'von-neumann' });
    expect(entropyRequestFrom('VON_NEUMANN', 1)).toEqual({ kind: 'von-neumann' });
    expect(entropyRequestFrom('petz-down', 2)).toEqual({ kind: 'petz-down', alpha: 2 });
    expect(entropyRequestFrom('SANDWICHED_UP', 1.01)).toEqual({ kind: 'sandwiched-up', alpha: 1.01 });
  });

  const requestRejections: [string, () => unknown, string][] = [
    ['alpha at 1 for a Rényi kind', () => entropyRequestFrom('petz-up', 1), 'alpha: must lie in (1, 2] for petz-up; Rényi objectives are not convex outside it'],
    ['alpha above 2', () => entropyRequestFrom('petz-up', 2.0000001), 'alpha: must lie in (1, 2] for petz-up; Rényi objectives are not convex outside it'],
    ['alpha missing for a Rényi kind', () => entropyRequestFrom('petz-down'), 'alpha: is required for petz-down (a Rényi order in (1, 2])'],
    ['alpha NaN', () => entropyRequestFrom('sandwiched-up', Number.NaN), 'alpha: must be a finite number (got NaN)'],
    ['alpha given for von Neumann', () => entropyRequestFrom('von-neumann', 1.5), 'alpha: must be omitted for von-neumann (got 1.5); it has no Rényi order'],
    ['unspecified kind', () => entropyRequestFrom('ENTROPY_KIND_UNSPECIFIED'), 'entropy: must be specified (one of von-neumann, petz-up, petz-down, sandwiched-up)'],
  ];
  it.each(requestRejections)('%s', (_name, run, message) => {
    expect(validationError(run).message).toBe(message);
  });
});

describe('densityOperatorFromJson', () => {
  it('accepts a density operator and returns its Hermitian part', () => {
    const rho = densityOperatorFromJson(real(2, 2, [0.5, 0.5, 0.5, 0.5]), 'state', 2);
    expect(Array.from(rho.re)).toEqual([0.5, 0.5, 0.5, 0.5]);
  });

  it('names the field for each defect', () => {
    expect(validationError(() => densityOperatorFromJson(I4, 'state', 2)).message).toBe('state: must be 2×2, got 4×4');
    expect(validationError(() => densityOperatorFromJson(real(2, 2, [0.5, 0, 0, 0.4]), 'state', 2)).message).toBe(
      'state: must have trace 1 (got 0.9)',
    );
    expect(validationError(() => densityOperatorFromJson(real(2, 2, [0.5, 0.6, 0.6, 0.5]), 'state', 2)).message).toBe(
      'state: must be positive semidefinite (smallest eigenvalue -1.000e-1)',
    );
  });
});

describe('validation polls a checkpoint', () => {
  it('calls it between parts and lets its throw abort the validation', () => {
    let calls = 0;
    problemFromJson(buildExample('bb84-prepare-measure', {}), { checkpoint: () => void calls++ });
    expect(calls).toBeGreaterThan(2);
    const abort = new Error('deadline');
    expect(() => problemFromJson(buildExample('bb84-prepare-measure', {}), { checkpoint: () => { throw abort; } })).toThrow(abort);
  });
});
