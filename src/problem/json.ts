// The protobuf JSON mapping of problem.proto: TypeScript shapes of the JSON files and strict readers that
// name the field path of every defect.
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { ValidationError } from './errors.js';

/** Matrices on the wire and in JSON files: row-major, im omitted for real matrices. */
export interface MatrixJson {
  rows: number;
  cols: number;
  re: number[];
  im?: number[];
}

/** renyibound.v1.LinearConstraint in JSON. */
export interface LinearConstraintJson {
  label?: string;
  operator: MatrixJson;
  /** Absent: no lower bound. */
  lower?: number;
  /** Absent: no upper bound. */
  upper?: number;
}

/** renyibound.v1.ObservedStatistics in JSON. */
export interface ObservedStatisticsJson {
  label?: string;
  povmA: MatrixJson[];
  povmB: MatrixJson[];
  probabilities: number[];
  tolerance?: number;
}

/** renyibound.v1.AnnouncementBranch in JSON. */
export interface AnnouncementBranchJson {
  label?: string;
  krausOperators: MatrixJson[];
  keyProjectors: MatrixJson[];
  score?: number;
}

/** renyibound.v1.HonestStatistics in JSON. */
export interface HonestStatisticsJson {
  branchProbabilities: number[];
  errorCorrectionEntropy?: number[];
}

/** renyibound.v1.Problem in JSON (lowerCamelCase; parsers also accept the proto's snake_case names). */
export interface ProblemJson {
  dimensionA: number;
  dimensionB: number;
  sourceMarginal?: MatrixJson | null;
  constraints?: LinearConstraintJson[];
  observations?: ObservedStatisticsJson[];
  branches: AnnouncementBranchJson[];
  entropy?: string;
  alpha?: number | null;
  description?: string;
  /** renyibound.v1.HonestStatistics (docs/finite-size.md). */
  honestStatistics?: HonestStatisticsJson | null;
}

type JsonObject = Record<string, unknown>;

/** snake_case spelling of a lowerCamelCase name (the proto field name the JSON mapping also accepts). */
function snakeCase(name: string): string {
  return name.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`);
}

/**
 * A JSON object whose keys are checked against the message's fields. Both the lowerCamelCase JSON name and the
 * original snake_case proto name are accepted, as the protobuf JSON mapping requires; anything else is rejected
 * so that a misspelt field cannot be silently ignored.
 */
export class JsonMessage {
  readonly path: string;
  private readonly object: JsonObject;

  private constructor(object: JsonObject, path: string) {
    this.object = object;
    this.path = path;
  }

  /**
   * `optionalFields` are proto3 `optional` fields: decoders run with the shared loader options (oneofs: true) add
   * a virtual member `_name` whose value is "name" when the field is set; it is accepted and checked.
   */
  static read(json: unknown, path: string, fields: readonly string[], optionalFields: readonly string[] = []): JsonMessage {
    if (json === null || typeof json !== 'object' || Array.isArray(json)) {
      throw new ValidationError(path, 'must be a JSON object');
    }
    const object = json as JsonObject;
    const known = new Set<string>();
    for (const f of fields) {
      known.add(f);
      known.add(snakeCase(f));
    }
    for (const f of optionalFields) {
      const marker = object[`_${f}`];
      known.add(`_${f}`);
      if (marker !== undefined && marker !== null && marker !== f) {
        throw new ValidationError(childPath(path, `_${f}`), `must be ${JSON.stringify(f)} when present (the presence marker of ${f})`);
      }
    }
    for (const key of Object.keys(object)) {
      if (!known.has(key)) {
        throw new ValidationError(childPath(path, key), `unknown field (expected one of ${fields.join(', ')})`);
      }
    }
    for (const f of fields) {
      const snake = snakeCase(f);
      if (snake !== f && f in object && snake in object) {
        throw new ValidationError(childPath(path, f), `given twice (as ${f} and ${snake})`);
      }
    }
    return new JsonMessage(object, path);
  }

  /** The raw value, or undefined when absent or null (null is how protobuf JSON writes an unset message). */
  get(name: string): unknown {
    const value = name in this.object ? this.object[name] : this.object[snakeCase(name)];
    return value === null ? undefined : value;
  }

  field(name: string): string {
    return childPath(this.path, name);
  }

  required(name: string): unknown {
    const value = this.get(name);
    if (value === undefined) throw new ValidationError(this.field(name), 'is required');
    return value;
  }

  /** A repeated field: absent means empty. */
  list(name: string): unknown[] {
    const value = this.get(name);
    if (value === undefined) return [];
    if (!Array.isArray(value)) throw new ValidationError(this.field(name), 'must be a JSON array');
    return value;
  }

  string(name: string): string {
    const value = this.get(name);
    if (value === undefined) return '';
    if (typeof value !== 'string') throw new ValidationError(this.field(name), 'must be a string');
    return value;
  }

  /** A proto3 `optional` double: undefined when absent. */
  optionalNumber(name: string): number | undefined {
    const value = this.get(name);
    return value === undefined ? undefined : finiteNumber(value, this.field(name));
  }

  /** A double field; absent means 0 (the proto3 default) unless `required`. */
  number(name: string, required = false): number {
    const value = required ? this.required(name) : this.get(name);
    if (value === undefined) return 0;
    return finiteNumber(value, this.field(name));
  }
}

export function childPath(path: string, name: string): string {
  return path === '' ? name : `${path}.${name}`;
}

/**
 * A finite double. Protobuf JSON may write doubles as strings ("1.5", "NaN", "Infinity"); numeric strings are
 * accepted, non-finite values never are.
 */
export function finiteNumber(value: unknown, field: string): number {
  let x: number;
  if (typeof value === 'number') x = value;
  else if (typeof value === 'string' && value.trim() !== '' && !Number.isNaN(Number(value))) x = Number(value);
  else if (value === 'NaN' || value === 'Infinity' || value === '-Infinity') x = Number(value);
  else throw new ValidationError(field, `must be a number (got ${describe(value)})`);
  if (!Number.isFinite(x)) throw new ValidationError(field, `must be a finite number (got ${x})`);
  return x;
}

/** A uint32 field (numbers or decimal strings, as the JSON mapping allows); absent means 0. */
export function unsignedInteger(value: unknown, field: string): number {
  if (value === undefined) return 0;
  const x = typeof value === 'string' && /^\d+$/.test(value) ? Number(value) : value;
  if (typeof x !== 'number' || !Number.isInteger(x) || x < 0 || x > 0xffffffff) {
    throw new ValidationError(field, `must be a nonnegative integer (got ${describe(value)})`);
  }
  return x;
}

function describe(value: unknown): string {
  if (value === undefined) return 'nothing';
  if (typeof value === 'string') return JSON.stringify(value);
  if (Array.isArray(value)) return 'an array';
  if (value === null) return 'null';
  if (typeof value === 'object') return 'an object';
  return String(value);
}

function numberArray(value: unknown, field: string, length: number): Float64Array {
  if (!Array.isArray(value)) throw new ValidationError(field, 'must be a JSON array of numbers');
  if (value.length !== length) {
    throw new ValidationError(field, `must hold rows·cols = ${length} numbers, got ${value.length}`);
  }
  const out = new Float64Array(length);
  for (let k = 0; k < length; k++) out[k] = finiteNumber(value[k], `${field}[${k}]`);
  return out;
}

export const MATRIX_FIELDS = ['rows', 'cols', 're', 'im'] as const;

/** renyibound.v1.Matrix → ComplexMatrix; `im` absent, null or empty means a real matrix. */
export function matrixFromJson(json: unknown, field: string): ComplexMatrix {
  const message = JsonMessage.read(json, field, MATRIX_FIELDS);
  const rows = unsignedInteger(message.required('rows'), message.field('rows'));
  const cols = unsignedInteger(message.required('cols'), message.field('cols'));
  if (rows === 0) throw new ValidationError(message.field('rows'), 'must be at least 1');
  if (cols === 0) throw new ValidationError(message.field('cols'), 'must be at least 1');
  const re = numberArray(message.required('re'), message.field('re'), rows * cols);
  const imJson = message.get('im');
  const im =
    imJson === undefined || (Array.isArray(imJson) && imJson.length === 0)
      ? new Float64Array(rows * cols)
      : numberArray(imJson, message.field('im'), rows * cols);
  return new ComplexMatrix(rows, cols, re, im);
}

/** ComplexMatrix → renyibound.v1.Matrix JSON; `im` is omitted when every imaginary part is zero. */
export function matrixToJson(m: ComplexMatrix): MatrixJson {
  const json: MatrixJson = { rows: m.rows, cols: m.cols, re: Array.from(m.re, normaliseZero) };
  if (m.im.some((x) => x !== 0)) json.im = Array.from(m.im, normaliseZero);
  return json;
}

// -0 prints as 0 in JSON anyway; normalising keeps equality checks on the arrays simple.
function normaliseZero(x: number): number {
  return x === 0 ? 0 : x;
}
