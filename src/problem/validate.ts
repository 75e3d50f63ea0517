// Problem JSON (protobuf JSON mapping of renyibound.v1.Problem) → validated Problem with every constraint in
// operator form. Each defect is reported as a ValidationError naming the field path and the reason.
import {
  ComplexMatrix,
  addScaledInPlace,
  kron,
  multiplyAdjointLeft,
} from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { whilePolling } from '../linear-algebra/interruption.js';
import { type AnnouncementBranch, type EntropyRequest, type LinearConstraint, type Problem } from './model.js';
import { ValidationError } from './errors.js';
import { entropyRequestFrom, isUnspecifiedEntropy } from './entropy-request.js';
import { JsonMessage, MATRIX_FIELDS, finiteNumber, matrixFromJson, unsignedInteger } from './json.js';
import {
  idempotencyDefect,
  identityDeviation,
  requireDensityOperator,
  requireHermitian,
  requirePositiveSemidefinite,
  requireShape,
} from './operator-checks.js';
import { DEFAULT_MAX_DIMENSION, PROBABILITY_SUM_TOLERANCE, STRUCTURE_TOLERANCE } from './tolerances.js';
import { HONEST_STATISTICS_FIELDS, honestStatisticsFromJson } from './honest-statistics.js';

export { ValidationError } from './errors.js';

export interface ValidationLimits {
  /** Largest joint dimension dimensionA·dimensionB and branch output dimension accepted (default 256). */
  maxDimension?: number;
  /** Called between constraints, observations and branches and inside their large products; throws to abort. */
  checkpoint?: () => void;
}

/** A validated problem and, when the JSON named one, the entropy request it carries. */
export interface ParsedProblem {
  problem: Problem;
  request?: EntropyRequest;
}

const PROBLEM_FIELDS = [
  'dimensionA',
  'dimensionB',
  'sourceMarginal',
  'constraints',
  'observations',
  'branches',
  'entropy',
  'alpha',
  'description',
  'honestStatistics',
] as const;
const CONSTRAINT_FIELDS = ['label', 'operator', 'lower', 'upper'] as const;
const OBSERVATION_FIELDS = ['label', 'povmA', 'povmB', 'probabilities', 'tolerance'] as const;
const BRANCH_FIELDS = ['label', 'krausOperators', 'keyProjectors', 'score'] as const;

/** The JSON field names the readers accept, per renyibound.v1 message (a test holds them equal to the .proto). */
export const MESSAGE_FIELDS: Readonly<Record<string, readonly string[]>> = {
  Matrix: MATRIX_FIELDS,
  LinearConstraint: CONSTRAINT_FIELDS,
  ObservedStatistics: OBSERVATION_FIELDS,
  AnnouncementBranch: BRANCH_FIELDS,
  Problem: PROBLEM_FIELDS,
  HonestStatistics: HONEST_STATISTICS_FIELDS,
};

/** Validates and expands a problem; see parseProblemJson. */
export function problemFromJson(json: unknown, limits: ValidationLimits = {}): Problem {
  return parseProblemJson(json, limits).problem;
}

/**
 * Validates a renyibound.v1.Problem JSON and expands it: the source marginal into dimensionA² equalities
 * Tr((B_k ⊗ 1_B)ρ) = Tr(B_k ρ_A) over the elementary Hermitian basis B_k of H_A; each observation table entry
 * into p − tolerance ≤ Tr((P_x ⊗ Q_y)ρ) ≤ p + tolerance; explicit constraints are kept (after them, in this order:
 * explicit constraints, source marginal, observations). Operators are stored as their exact Hermitian parts.
 */
export function parseProblemJson(json: unknown, limits: ValidationLimits = {}): ParsedProblem {
  // The products and eigendecompositions of the checks poll it too (a branch at d = 256 takes about a second).
  return whilePolling(limits.checkpoint, () => parseProblem(json, limits));
}

function parseProblem(json: unknown, limits: ValidationLimits): ParsedProblem {
  const maxDimension = limits.maxDimension ?? DEFAULT_MAX_DIMENSION;
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    throw new ValidationError('problem', 'must be a JSON object');
  }
  const message = JsonMessage.read(json, '', PROBLEM_FIELDS, ['alpha']);
  const dimensionA = positiveDimension(message.required('dimensionA'), 'dimensionA', maxDimension);
  const dimensionB = positiveDimension(message.required('dimensionB'), 'dimensionB', maxDimension);
  const d = dimensionA * dimensionB;
  if (d > maxDimension) {
    throw new ValidationError(
      'dimensionB',
      `dimensionA·dimensionB = ${d} exceeds the maximum joint dimension ${maxDimension}`,
    );
  }

  const checkpoint = limits.checkpoint ?? (() => {});
  const constraints: LinearConstraint[] = message.list('constraints').map((c, i) => {
    checkpoint();
    return constraintFromJson(c, `constraints[${i}]`, d);
  });

  let sourceMarginal: ComplexMatrix | undefined;
  const marginalJson = message.get('sourceMarginal');
  if (marginalJson !== undefined) {
    sourceMarginal = requireDensityOperator(matrixFromJson(marginalJson, 'sourceMarginal'), dimensionA, 'sourceMarginal');
    constraints.push(...sourceMarginalConstraints(sourceMarginal, dimensionB));
  }

  message.list('observations').forEach((o, k) => {
    checkpoint();
    constraints.push(...observationConstraints(o, `observations[${k}]`, dimensionA, dimensionB));
  });

  const branchList = message.list('branches');
  if (branchList.length === 0) {
    throw new ValidationError('branches', 'must hold at least one announcement branch');
  }
  const branches = branchList.map((b, c) => {
    checkpoint();
    return branchFromJson(b, `branches[${c}]`, d, maxDimension);
  });
  checkpoint();
  requireCompleteness(branches, d);

  const description = message.string('description');
  const problem: Problem = { dimensionA, dimensionB, constraints, branches };
  if (sourceMarginal !== undefined) problem.sourceMarginal = sourceMarginal;
  if (description !== '') problem.description = description;
  const honestJson = message.get('honestStatistics');
  if (honestJson !== undefined) {
    problem.honestStatistics = honestStatisticsFromJson(honestJson, 'honestStatistics', branches.map((b) => b.keyProjectors.length));
  }

  const entropyJson = message.get('entropy');
  const alphaJson = message.get('alpha');
  const alpha = alphaJson === undefined ? undefined : finiteNumber(alphaJson, 'alpha');
  if (isUnspecifiedEntropy(entropyJson)) {
    if (alpha !== undefined) throw new ValidationError('alpha', 'given without an entropy kind');
    return { problem };
  }
  return { problem, request: entropyRequestFrom(entropyJson, alpha) };
}

function positiveDimension(value: unknown, field: string, maxDimension: number): number {
  const n = unsignedInteger(value, field);
  if (n < 1) throw new ValidationError(field, 'must be at least 1');
  if (n > maxDimension) throw new ValidationError(field, `${n} exceeds the maximum dimension ${maxDimension}`);
  return n;
}

function constraintFromJson(json: unknown, path: string, d: number): LinearConstraint {
  const message = JsonMessage.read(json, path, CONSTRAINT_FIELDS, ['lower', 'upper']);
  const operatorField = message.field('operator');
  const operator = matrixFromJson(message.required('operator'), operatorField);
  requireShape(operator, d, d, operatorField, ' (dimensionA·dimensionB square)');
  // An absent side is no bound at all (proto3 field presence): a one-sided constraint.
  const lower = message.optionalNumber('lower') ?? -Infinity;
  const upper = message.optionalNumber('upper') ?? Infinity;
  if (lower > upper) throw new ValidationError(message.field('lower'), `must not exceed upper (${lower} > ${upper})`);
  const label = message.string('label');
  return { label: label === '' ? path : label, operator: requireHermitian(operator, operatorField), lower, upper };
}

/**
 * The elementary Hermitian basis of a dimension-n space, orthonormal in the Hilbert–Schmidt inner product:
 * |i⟩⟨i|; (|i⟩⟨j| + |j⟩⟨i|)/√2 and (−i|i⟩⟨j| + i|j⟩⟨i|)/√2 for i < j. Labels name the entry each one reads.
 */
export function elementaryHermitianBasis(n: number): { label: string; operator: ComplexMatrix }[] {
  const basis: { label: string; operator: ComplexMatrix }[] = [];
  const s = Math.SQRT1_2;
  for (let i = 0; i < n; i++) {
    const e = new ComplexMatrix(n, n);
    e.re[i * n + i] = 1;
    basis.push({ label: `[${i},${i}]`, operator: e });
  }
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const symmetric = new ComplexMatrix(n, n);
      symmetric.re[i * n + j] = s;
      symmetric.re[j * n + i] = s;
      basis.push({ label: `.re[${i},${j}]`, operator: symmetric });
      const antisymmetric = new ComplexMatrix(n, n);
      antisymmetric.im[i * n + j] = -s;
      antisymmetric.im[j * n + i] = s;
      basis.push({ label: `.im[${i},${j}]`, operator: antisymmetric });
    }
  }
  return basis;
}

/** Tr_B ρ = ρ_A as dimensionA² equalities; labels "sourceMarginal[i,i]", "sourceMarginal.re[i,j]", "sourceMarginal.im[i,j]". */
export function sourceMarginalConstraints(marginal: ComplexMatrix, dimensionB: number): LinearConstraint[] {
  const identityB = ComplexMatrix.identity(dimensionB);
  return elementaryHermitianBasis(marginal.rows).map(({ label, operator }) => {
    const value = realTraceProduct(operator, marginal);
    return { label: `sourceMarginal${label}`, operator: kron(operator, identityB), lower: value, upper: value };
  });
}

// Re Tr(A·B) for Hermitian A, B (the imaginary part vanishes).
function realTraceProduct(a: ComplexMatrix, b: ComplexMatrix): number {
  const n = a.rows;
  let s = 0;
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) s += a.re[i * n + k] * b.re[k * n + i] - a.im[i * n + k] * b.im[k * n + i];
  }
  return s;
}

function povmFromJson(list: unknown[], field: string, dimension: number, side: string): ComplexMatrix[] {
  if (list.length === 0) throw new ValidationError(field, 'must hold at least one POVM element');
  const elements = list.map((json, x) => {
    const elementField = `${field}[${x}]`;
    const m = matrixFromJson(json, elementField);
    requireShape(m, dimension, dimension, elementField, ` (${side} square)`);
    const element = requireHermitian(m, elementField);
    requirePositiveSemidefinite(element, elementField);
    return element;
  });
  const sum = new ComplexMatrix(dimension, dimension);
  for (const e of elements) addScaledInPlace(sum, e, 1);
  const deviation = identityDeviation(sum);
  if (deviation > STRUCTURE_TOLERANCE) {
    throw new ValidationError(
      field,
      `elements must sum to the identity (largest deviation ${deviation.toExponential(2)} exceeds ${STRUCTURE_TOLERANCE})`,
    );
  }
  return elements;
}

function observationConstraints(json: unknown, path: string, dimensionA: number, dimensionB: number): LinearConstraint[] {
  const message = JsonMessage.read(json, path, OBSERVATION_FIELDS);
  const povmA = povmFromJson(message.list('povmA'), message.field('povmA'), dimensionA, 'dimensionA');
  const povmB = povmFromJson(message.list('povmB'), message.field('povmB'), dimensionB, 'dimensionB');
  const tolerance = message.number('tolerance');
  if (tolerance < 0) throw new ValidationError(message.field('tolerance'), `must be nonnegative (got ${tolerance})`);

  const probabilitiesField = message.field('probabilities');
  const table = message.list('probabilities');
  const entries = povmA.length * povmB.length;
  if (table.length !== entries) {
    throw new ValidationError(
      probabilitiesField,
      `must hold |povmA|·|povmB| = ${entries} entries (row-major), got ${table.length}`,
    );
  }
  let total = 0;
  const probabilities = table.map((value, k) => {
    const entryField = `${probabilitiesField}[${k}]`;
    const p = finiteNumber(value, entryField);
    if (p < 0) throw new ValidationError(entryField, `must be nonnegative (got ${p})`);
    total += p;
    return p;
  });
  const allowance = PROBABILITY_SUM_TOLERANCE + entries * tolerance;
  if (Math.abs(total - 1) > allowance) {
    throw new ValidationError(probabilitiesField, `must sum to 1 within ${allowance} (sum ${total})`);
  }

  const label = message.string('label');
  const prefix = label === '' ? path : label;
  const spectraA = povmA.map(spectrumOf);
  const spectraB = povmB.map(spectrumOf);
  const constraints: LinearConstraint[] = [];
  for (let x = 0; x < povmA.length; x++) {
    for (let y = 0; y < povmB.length; y++) {
      const p = probabilities[x * povmB.length + y];
      constraints.push({
        label: `${prefix}.probabilities[${x},${y}]`,
        operator: kron(povmA[x], povmB[y]),
        lower: p - tolerance,
        upper: p + tolerance,
        spectrum: kronSpectrum(spectraA[x], spectraB[y]),
      });
    }
  }
  return constraints;
}

/** Smallest and largest eigenvalue of a small Hermitian operator (a POVM element). */
function spectrumOf(element: ComplexMatrix): { min: number; max: number } {
  const values = eigvalsh(element);
  return { min: values[0], max: values[values.length - 1] };
}

/** The eigenvalues of P ⊗ Q are the products a·b, so its extremes are among the products of the extremes. */
function kronSpectrum(a: { min: number; max: number }, b: { min: number; max: number }): { min: number; max: number } {
  const corners = [a.min * b.min, a.min * b.max, a.max * b.min, a.max * b.max];
  return { min: Math.min(...corners), max: Math.max(...corners) };
}

function branchFromJson(json: unknown, path: string, d: number, maxDimension: number): AnnouncementBranch {
  const message = JsonMessage.read(json, path, BRANCH_FIELDS);
  const krausField = message.field('krausOperators');
  const krausList = message.list('krausOperators');
  if (krausList.length === 0) throw new ValidationError(krausField, 'must hold at least one Kraus operator');
  const krausOperators = krausList.map((k, j) => matrixFromJson(k, `${krausField}[${j}]`));
  const outputDimension = krausOperators[0].rows;
  krausOperators.forEach((k, j) => {
    const field = `${krausField}[${j}]`;
    if (k.cols !== d) {
      throw new ValidationError(field, `must have dimensionA·dimensionB = ${d} columns, got ${k.cols}`);
    }
    if (k.rows !== outputDimension) {
      throw new ValidationError(
        field,
        `has ${k.rows} rows but krausOperators[0] has ${outputDimension} (a branch maps into one output space)`,
      );
    }
  });
  if (outputDimension > maxDimension) {
    throw new ValidationError(`${krausField}[0]`, `output dimension ${outputDimension} exceeds the maximum ${maxDimension}`);
  }

  const projectorField = message.field('keyProjectors');
  const projectorList = message.list('keyProjectors');
  if (projectorList.length === 0) {
    throw new ValidationError(projectorField, 'must hold at least one projector (a single identity means no key)');
  }
  const sum = new ComplexMatrix(outputDimension, outputDimension);
  const keyProjectors = projectorList.map((json, k) => {
    const field = `${projectorField}[${k}]`;
    const m = matrixFromJson(json, field);
    requireShape(m, outputDimension, outputDimension, field, ' (the Kraus operators’ output dimension square)');
    const projector = requireHermitian(m, field);
    const defect = idempotencyDefect(projector);
    if (defect > STRUCTURE_TOLERANCE) {
      throw new ValidationError(
        field,
        `must be an orthogonal projector (P² − P has an entry of size ${defect.toExponential(2)}, tolerance ${STRUCTURE_TOLERANCE})`,
      );
    }
    addScaledInPlace(sum, projector, 1);
    return projector;
  });
  const deviation = identityDeviation(sum);
  if (deviation > STRUCTURE_TOLERANCE) {
    throw new ValidationError(
      projectorField,
      `must sum to the identity on the branch output (largest deviation ${deviation.toExponential(2)} exceeds ${STRUCTURE_TOLERANCE})`,
    );
  }

  const label = message.string('label');
  return { label: label === '' ? path : label, krausOperators, keyProjectors, score: message.number('score') };
}

/** Σ_{c,j} K†K = 1: a missing outcome would drop its probability from the Rényi sums and overstate the entropy. */
function requireCompleteness(branches: AnnouncementBranch[], d: number): void {
  const sum = new ComplexMatrix(d, d);
  for (const branch of branches) {
    for (const k of branch.krausOperators) addScaledInPlace(sum, multiplyAdjointLeft(k, k), 1);
  }
  const deviation = identityDeviation(sum);
  if (deviation > STRUCTURE_TOLERANCE) {
    throw new ValidationError(
      'branches',
      `Σ K†K over all Kraus operators of all branches must equal the identity (largest deviation ` +
        `${deviation.toExponential(2)} exceeds ${STRUCTURE_TOLERANCE}); add the missing outcomes as a branch ` +
        `with a single key projector, since an incomplete set overstates Rényi entropies`,
    );
  }
}
