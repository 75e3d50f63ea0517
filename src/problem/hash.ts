// The input hash: SHA-256 over a canonical encoding of everything that changes the answer of a solve.
//
// Encoding (version tag "renyi-bound/input-hash/v2"): a sequence of tokens, each followed by "\n":
//   tag; "dimensionA" n; "dimensionB" n;
//   "sourceMarginal" then "none" or a matrix;
//   "constraints" count, then per constraint (in order): matrix, lower, upper (an absent side is "none");
//   "branches" count, then per branch (in order): "kraus" count, matrices; "keyProjectors" count, matrices; score;
//   "entropy" kind (string); "alpha" double, or "null" for von Neumann; "gapTolerance" double;
//   "maxIterations" double; "solverVersion" string.
// A matrix is "matrix" rows cols, then one token of 8·2·rows·cols raw bytes: the big-endian binary64 bits of the
// rows·cols real parts, then of the rows·cols imaginary parts (row-major, −0 written as +0).
// Every double is the 16 lower-case hex digits of its IEEE-754 binary64 bits, big-endian, with −0 written as +0,
// so the encoding is exact and independent of decimal formatting. Dimensions, shapes and counts are decimal integers. Strings are their UTF-8
// byte length, ":", and the string. Labels and descriptions are excluded (they change no number); constraint and
// branch order is kept because certificate multipliers are indexed by it.
import { createHash, type Hash } from 'node:crypto';
import { endianness } from 'node:os';
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { EntropyRequest, Problem } from './model.js';

/** Settings that change the reported numbers (the time limit does not: it only decides when to stop). */
export interface HashedSettings {
  gapTolerance: number;
  maxIterations: number;
}

export const INPUT_HASH_VERSION = 'renyi-bound/input-hash/v2';

const bits = new DataView(new ArrayBuffer(8));
const LITTLE_ENDIAN = endianness() === 'LE';

/** The 16 hex digits of a double's bits; −0 becomes +0 (they compare equal and give the same answers). */
export function doubleHex(x: number): string {
  bits.setFloat64(0, x === 0 ? 0 : x, false);
  return bits.getBigUint64(0, false).toString(16).padStart(16, '0');
}

let scratchBuffer = new Float64Array(0);

/** A Float64Array view of `length` entries over one buffer kept between calls (grown when needed). */
function scratch(length: number): Float64Array {
  if (scratchBuffer.length < length) scratchBuffer = new Float64Array(length);
  return scratchBuffer.subarray(0, length);
}

class CanonicalWriter {
  private readonly hash: Hash = createHash('sha256');

  token(text: string): void {
    this.hash.update(text);
    this.hash.update('\n');
  }

  integer(n: number): void {
    if (!Number.isSafeInteger(n)) throw new RangeError(`inputHash: ${n} is not an integer`);
    this.token(String(n));
  }

  double(x: number): void {
    this.token(doubleHex(x));
  }

  /** A constraint bound: an absent side (±Infinity) is a token no double can produce. */
  bound(x: number): void {
    if (Number.isFinite(x)) this.double(x);
    else this.token('none');
  }

  string(s: string): void {
    this.token(`${Buffer.byteLength(s, 'utf8')}:${s}`);
  }

  matrix(m: ComplexMatrix): void {
    this.token('matrix');
    this.integer(m.rows);
    this.integer(m.cols);
    // Raw big-endian binary64 bytes: d = 256 problems carry millions of entries, too many for one token each.
    // Copied as a block into a reused buffer and byte-swapped natively (a DataView write per entry into a fresh
    // buffer cost 0.25 s at d = 256, mostly first-touch page faults).
    const values = scratch(m.re.length + m.im.length);
    values.set(m.re);
    values.set(m.im, m.re.length);
    for (let k = 0; k < values.length; k++) if (values[k] === 0) values[k] = 0;
    const bytes = Buffer.from(values.buffer, values.byteOffset, values.byteLength);
    if (LITTLE_ENDIAN) bytes.swap64();
    this.hash.update(bytes);
    this.hash.update('\n');
  }

  digest(): string {
    return this.hash.digest('hex');
  }
}

/** SHA-256 (hex) of the canonical encoding described at the top of this file. */
export function inputHash(
  problem: Problem,
  request: EntropyRequest,
  settings: HashedSettings,
  solverVersion: string,
): string {
  const w = new CanonicalWriter();
  w.token(INPUT_HASH_VERSION);
  w.token('dimensionA');
  w.integer(problem.dimensionA);
  w.token('dimensionB');
  w.integer(problem.dimensionB);
  w.token('sourceMarginal');
  if (problem.sourceMarginal === undefined) w.token('none');
  else w.matrix(problem.sourceMarginal);
  w.token('constraints');
  w.integer(problem.constraints.length);
  for (const c of problem.constraints) {
    w.matrix(c.operator);
    w.bound(c.lower);
    w.bound(c.upper);
  }
  w.token('branches');
  w.integer(problem.branches.length);
  for (const b of problem.branches) {
    w.token('kraus');
    w.integer(b.krausOperators.length);
    for (const k of b.krausOperators) w.matrix(k);
    w.token('keyProjectors');
    w.integer(b.keyProjectors.length);
    for (const p of b.keyProjectors) w.matrix(p);
    w.double(b.score);
  }
  w.token('entropy');
  w.string(request.kind);
  w.token('alpha');
  if (request.kind === 'von-neumann' || request.alpha === undefined) w.token('null');
  else w.double(request.alpha);
  w.token('gapTolerance');
  w.double(settings.gapTolerance);
  w.token('maxIterations');
  w.double(settings.maxIterations);
  w.token('solverVersion');
  w.string(solverVersion);
  return w.digest();
}
