// Dense complex matrices stored row-major as two Float64Arrays (real and imaginary parts).
import { pollAtOrder } from './interruption.js';

/**
 * Storage of small matrices is cut from shared buffers: a Float64Array above 64 bytes gets its own off-heap buffer,
 * about 0.45 µs each against 0.1 µs for a view into an existing one (measured, Node 20, 8×8 complex matrices), and a
 * sandwiched-up evaluation at d = 8 makes hundreds of them (docs/objectives.md, "Allocation"). Views are cut off the
 * end of the current buffer and never reused, so each is zero-filled and owned by its matrix alone; a buffer is freed
 * when its last view is. Per thread (each worker has its own module), and no callback runs inside an allocation.
 */
const SLAB_BYTES = 16384;
/** Up to 64 bytes V8 keeps a typed array on its own heap, where a fresh one is already cheap. */
const ON_HEAP_LENGTH = 8;
/** Longer arrays get their own buffer: their O(n³) products dwarf the allocation, and a view never pins much memory. */
const SLAB_MAX_LENGTH = 256;
let slab = new ArrayBuffer(SLAB_BYTES);
let slabOffset = 0;

function zeroedStorage(length: number): Float64Array {
  if (length <= ON_HEAP_LENGTH || length > SLAB_MAX_LENGTH) return new Float64Array(length);
  const bytes = length * Float64Array.BYTES_PER_ELEMENT;
  if (slabOffset + bytes > SLAB_BYTES) {
    slab = new ArrayBuffer(SLAB_BYTES);
    slabOffset = 0;
  }
  const view = new Float64Array(slab, slabOffset, length);
  slabOffset += bytes;
  return view;
}

export class ComplexMatrix {
  readonly rows: number;
  readonly cols: number;
  readonly re: Float64Array;
  readonly im: Float64Array;

  constructor(rows: number, cols: number, re?: Float64Array, im?: Float64Array) {
    this.rows = rows;
    this.cols = cols;
    this.re = re ?? zeroedStorage(rows * cols);
    this.im = im ?? zeroedStorage(rows * cols);
    if (this.re.length !== rows * cols || this.im.length !== rows * cols) {
      throw new RangeError(`ComplexMatrix: storage length does not match ${rows}x${cols}`);
    }
  }

  static zeros(rows: number, cols: number = rows): ComplexMatrix {
    return new ComplexMatrix(rows, cols);
  }

  static identity(n: number): ComplexMatrix {
    const m = new ComplexMatrix(n, n);
    for (let i = 0; i < n; i++) m.re[i * n + i] = 1;
    return m;
  }

  static diagonal(values: ArrayLike<number>): ComplexMatrix {
    const n = values.length;
    const m = new ComplexMatrix(n, n);
    for (let i = 0; i < n; i++) m.re[i * n + i] = values[i];
    return m;
  }

  /** Builds from nested arrays of reals, or of [re, im] pairs. */
  static from(entries: ReadonlyArray<ReadonlyArray<number | readonly [number, number]>>): ComplexMatrix {
    const rows = entries.length;
    const cols = rows === 0 ? 0 : entries[0].length;
    const m = new ComplexMatrix(rows, cols);
    for (let i = 0; i < rows; i++) {
      if (entries[i].length !== cols) throw new RangeError('ComplexMatrix.from: ragged rows');
      for (let j = 0; j < cols; j++) {
        const e = entries[i][j];
        if (typeof e === 'number') m.re[i * cols + j] = e;
        else {
          m.re[i * cols + j] = e[0];
          m.im[i * cols + j] = e[1];
        }
      }
    }
    return m;
  }

  get isSquare(): boolean {
    return this.rows === this.cols;
  }

  clone(): ComplexMatrix {
    return new ComplexMatrix(this.rows, this.cols, this.re.slice(), this.im.slice());
  }

  getRe(i: number, j: number): number {
    return this.re[i * this.cols + j];
  }

  getIm(i: number, j: number): number {
    return this.im[i * this.cols + j];
  }

  set(i: number, j: number, re: number, im = 0): void {
    this.re[i * this.cols + j] = re;
    this.im[i * this.cols + j] = im;
  }
}

function assertSameShape(a: ComplexMatrix, b: ComplexMatrix, op: string): void {
  if (a.rows !== b.rows || a.cols !== b.cols) {
    throw new RangeError(`${op}: shapes ${a.rows}x${a.cols} and ${b.rows}x${b.cols} differ`);
  }
}

export function add(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  assertSameShape(a, b, 'add');
  const c = new ComplexMatrix(a.rows, a.cols);
  for (let k = 0; k < a.re.length; k++) {
    c.re[k] = a.re[k] + b.re[k];
    c.im[k] = a.im[k] + b.im[k];
  }
  return c;
}

export function subtract(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  assertSameShape(a, b, 'subtract');
  const c = new ComplexMatrix(a.rows, a.cols);
  for (let k = 0; k < a.re.length; k++) {
    c.re[k] = a.re[k] - b.re[k];
    c.im[k] = a.im[k] - b.im[k];
  }
  return c;
}

export function scale(a: ComplexMatrix, s: number): ComplexMatrix {
  const c = new ComplexMatrix(a.rows, a.cols);
  for (let k = 0; k < a.re.length; k++) {
    c.re[k] = a.re[k] * s;
    c.im[k] = a.im[k] * s;
  }
  return c;
}

/** In place: a ← s·a (for a temporary the caller owns; same products as scale). */
export function scaleInPlace(a: ComplexMatrix, s: number): ComplexMatrix {
  for (let k = 0; k < a.re.length; k++) {
    a.re[k] *= s;
    a.im[k] *= s;
  }
  return a;
}

/** In place: target += s * a. */
export function addScaledInPlace(target: ComplexMatrix, a: ComplexMatrix, s: number): void {
  assertSameShape(target, a, 'addScaledInPlace');
  for (let k = 0; k < a.re.length; k++) {
    target.re[k] += s * a.re[k];
    target.im[k] += s * a.im[k];
  }
}

export function adjoint(a: ComplexMatrix): ComplexMatrix {
  const c = new ComplexMatrix(a.cols, a.rows);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.cols; j++) {
      c.re[j * a.rows + i] = a.re[i * a.cols + j];
      c.im[j * a.rows + i] = -a.im[i * a.cols + j];
    }
  }
  return c;
}

/**
 * Adds x·(row of B at bRow) to the row of C at cRow, m entries (one term of an i-k-j product).
 * Shared by the products below for rows that cannot join a four-row pass.
 */
function addScaledRow(
  cr: Float64Array,
  ci: Float64Array,
  cRow: number,
  xr: number,
  xi: number,
  br: Float64Array,
  bi: Float64Array,
  bRow: number,
  m: number,
): void {
  for (let j = 0; j < m; j++) {
    const yr = br[bRow + j];
    const yi = bi[bRow + j];
    cr[cRow + j] += xr * yr - xi * yi;
    ci[cRow + j] += xr * yi + xi * yr;
  }
}

/**
 * Adds x_t·(row of B at bRow) to four rows of C at once (each load of B serves four rows).
 * Every entry still sums its terms in the same order as one row at a time, so results are bit-identical.
 */
function addScaledRowFour(
  cr: Float64Array,
  ci: Float64Array,
  c0: number,
  c1: number,
  c2: number,
  c3: number,
  x0r: number,
  x0i: number,
  x1r: number,
  x1i: number,
  x2r: number,
  x2i: number,
  x3r: number,
  x3i: number,
  br: Float64Array,
  bi: Float64Array,
  bRow: number,
  m: number,
): void {
  for (let j = 0; j < m; j++) {
    const yr = br[bRow + j];
    const yi = bi[bRow + j];
    cr[c0 + j] += x0r * yr - x0i * yi;
    ci[c0 + j] += x0r * yi + x0i * yr;
    cr[c1 + j] += x1r * yr - x1i * yi;
    ci[c1 + j] += x1r * yi + x1i * yr;
    cr[c2 + j] += x2r * yr - x2i * yi;
    ci[c2 + j] += x2r * yi + x2i * yr;
    cr[c3 + j] += x3r * yr - x3i * yi;
    ci[c3 + j] += x3r * yi + x3i * yr;
  }
}

/** C = A·B. */
export function multiply(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  if (a.cols !== b.rows) throw new RangeError(`multiply: ${a.rows}x${a.cols} times ${b.rows}x${b.cols}`);
  pollAtOrder(Math.max(a.rows, a.cols, b.rows, b.cols));
  const n = a.rows;
  const m = b.cols;
  const p = a.cols;
  const c = new ComplexMatrix(n, m);
  const cr = c.re;
  const ci = c.im;
  const ar = a.re;
  const ai = a.im;
  const br = b.re;
  const bi = b.im;
  // i-k-j order streams rows of B and C contiguously; four rows of A per pass share each load of B.
  // Exact zeros of A are skipped (sparse Kraus operators), as a single-row loop would.
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const a0 = i * p;
    const a1 = a0 + p;
    const a2 = a1 + p;
    const a3 = a2 + p;
    const c0 = i * m;
    const c1 = c0 + m;
    const c2 = c1 + m;
    const c3 = c2 + m;
    for (let k = 0; k < p; k++) {
      const x0r = ar[a0 + k];
      const x0i = ai[a0 + k];
      const x1r = ar[a1 + k];
      const x1i = ai[a1 + k];
      const x2r = ar[a2 + k];
      const x2i = ai[a2 + k];
      const x3r = ar[a3 + k];
      const x3i = ai[a3 + k];
      const zero0 = x0r === 0 && x0i === 0;
      const zero1 = x1r === 0 && x1i === 0;
      const zero2 = x2r === 0 && x2i === 0;
      const zero3 = x3r === 0 && x3i === 0;
      const bRow = k * m;
      if (!zero0 && !zero1 && !zero2 && !zero3) {
        addScaledRowFour(cr, ci, c0, c1, c2, c3, x0r, x0i, x1r, x1i, x2r, x2i, x3r, x3i, br, bi, bRow, m);
      } else {
        if (!zero0) addScaledRow(cr, ci, c0, x0r, x0i, br, bi, bRow, m);
        if (!zero1) addScaledRow(cr, ci, c1, x1r, x1i, br, bi, bRow, m);
        if (!zero2) addScaledRow(cr, ci, c2, x2r, x2i, br, bi, bRow, m);
        if (!zero3) addScaledRow(cr, ci, c3, x3r, x3i, br, bi, bRow, m);
      }
    }
  }
  for (; i < n; i++) {
    const cRow = i * m;
    for (let k = 0; k < p; k++) {
      const xr = ar[i * p + k];
      const xi = ai[i * p + k];
      if (xr === 0 && xi === 0) continue;
      addScaledRow(cr, ci, cRow, xr, xi, br, bi, k * m, m);
    }
  }
  return c;
}

/** C = A·B†. */
export function multiplyAdjointRight(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  if (a.cols !== b.cols) throw new RangeError(`multiplyAdjointRight: ${a.rows}x${a.cols} times (${b.rows}x${b.cols})†`);
  pollAtOrder(Math.max(a.rows, a.cols, b.rows, b.cols));
  const n = a.rows;
  const m = b.rows;
  const p = a.cols;
  const c = new ComplexMatrix(n, m);
  const cr = c.re;
  const ci = c.im;
  const ar = a.re;
  const ai = a.im;
  const br = b.re;
  const bi = b.im;
  // Dot products of rows of A with rows of B, two rows of B per pass (each entry summed over k in order).
  for (let i = 0; i < n; i++) {
    const ra = i * p;
    let j = 0;
    for (; j + 1 < m; j += 2) {
      const rb0 = j * p;
      const rb1 = rb0 + p;
      let s0r = 0;
      let s0i = 0;
      let s1r = 0;
      let s1i = 0;
      for (let k = 0; k < p; k++) {
        const xr = ar[ra + k];
        const xi = ai[ra + k];
        const y0r = br[rb0 + k];
        const y0i = -bi[rb0 + k];
        const y1r = br[rb1 + k];
        const y1i = -bi[rb1 + k];
        s0r += xr * y0r - xi * y0i;
        s0i += xr * y0i + xi * y0r;
        s1r += xr * y1r - xi * y1i;
        s1i += xr * y1i + xi * y1r;
      }
      cr[i * m + j] = s0r;
      ci[i * m + j] = s0i;
      cr[i * m + j + 1] = s1r;
      ci[i * m + j + 1] = s1i;
    }
    for (; j < m; j++) {
      const rb = j * p;
      let sr = 0;
      let si = 0;
      for (let k = 0; k < p; k++) {
        const xr = ar[ra + k];
        const xi = ai[ra + k];
        const yr = br[rb + k];
        const yi = -bi[rb + k];
        sr += xr * yr - xi * yi;
        si += xr * yi + xi * yr;
      }
      cr[i * m + j] = sr;
      ci[i * m + j] = si;
    }
  }
  return c;
}

/** C = A†·B. */
export function multiplyAdjointLeft(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  if (a.rows !== b.rows) throw new RangeError(`multiplyAdjointLeft: (${a.rows}x${a.cols})† times ${b.rows}x${b.cols}`);
  pollAtOrder(Math.max(a.rows, a.cols, b.rows, b.cols));
  const n = a.cols;
  const m = b.cols;
  const p = a.rows;
  const c = new ComplexMatrix(n, m);
  const cr = c.re;
  const ci = c.im;
  const ar = a.re;
  const ai = a.im;
  const br = b.re;
  const bi = b.im;
  // k-i-j order streams rows of B and C; four rows of C per pass share each load of B (order kept,
  // exact zeros of A skipped).
  for (let k = 0; k < p; k++) {
    const rb = k * m;
    const ra = k * n;
    let i = 0;
    for (; i + 3 < n; i += 4) {
      const x0r = ar[ra + i];
      const x0i = -ai[ra + i];
      const x1r = ar[ra + i + 1];
      const x1i = -ai[ra + i + 1];
      const x2r = ar[ra + i + 2];
      const x2i = -ai[ra + i + 2];
      const x3r = ar[ra + i + 3];
      const x3i = -ai[ra + i + 3];
      const zero0 = x0r === 0 && x0i === 0;
      const zero1 = x1r === 0 && x1i === 0;
      const zero2 = x2r === 0 && x2i === 0;
      const zero3 = x3r === 0 && x3i === 0;
      const c0 = i * m;
      const c1 = c0 + m;
      const c2 = c1 + m;
      const c3 = c2 + m;
      if (!zero0 && !zero1 && !zero2 && !zero3) {
        addScaledRowFour(cr, ci, c0, c1, c2, c3, x0r, x0i, x1r, x1i, x2r, x2i, x3r, x3i, br, bi, rb, m);
      } else {
        if (!zero0) addScaledRow(cr, ci, c0, x0r, x0i, br, bi, rb, m);
        if (!zero1) addScaledRow(cr, ci, c1, x1r, x1i, br, bi, rb, m);
        if (!zero2) addScaledRow(cr, ci, c2, x2r, x2i, br, bi, rb, m);
        if (!zero3) addScaledRow(cr, ci, c3, x3r, x3i, br, bi, rb, m);
      }
    }
    for (; i < n; i++) {
      const xr = ar[ra + i];
      const xi = -ai[ra + i];
      if (xr === 0 && xi === 0) continue;
      addScaledRow(cr, ci, i * m, xr, xi, br, bi, rb, m);
    }
  }
  return c;
}

/** K·X·K† for a Kraus-type conjugation. */
export function conjugate(k: ComplexMatrix, x: ComplexMatrix): ComplexMatrix {
  return multiplyAdjointRight(multiply(k, x), k);
}

/** K†·X·K, the adjoint (Heisenberg-picture) conjugation. */
export function conjugateAdjoint(k: ComplexMatrix, x: ComplexMatrix): ComplexMatrix {
  return multiplyAdjointLeft(k, multiply(x, k));
}

export function kron(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
  const rows = a.rows * b.rows;
  const cols = a.cols * b.cols;
  const c = new ComplexMatrix(rows, cols);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.cols; j++) {
      const xr = a.re[i * a.cols + j];
      const xi = a.im[i * a.cols + j];
      if (xr === 0 && xi === 0) continue;
      for (let k = 0; k < b.rows; k++) {
        for (let l = 0; l < b.cols; l++) {
          const yr = b.re[k * b.cols + l];
          const yi = b.im[k * b.cols + l];
          const idx = (i * b.rows + k) * cols + j * b.cols + l;
          c.re[idx] = xr * yr - xi * yi;
          c.im[idx] = xr * yi + xi * yr;
        }
      }
    }
  }
  return c;
}

/** Tr_B of an operator on H_A ⊗ H_B (index a·dB + b). */
export function partialTraceB(x: ComplexMatrix, dA: number, dB: number): ComplexMatrix {
  if (x.rows !== dA * dB || x.cols !== dA * dB) throw new RangeError('partialTraceB: dimension mismatch');
  const d = dA * dB;
  const c = new ComplexMatrix(dA, dA);
  for (let a = 0; a < dA; a++) {
    for (let a2 = 0; a2 < dA; a2++) {
      let sr = 0;
      let si = 0;
      for (let b = 0; b < dB; b++) {
        const idx = (a * dB + b) * d + a2 * dB + b;
        sr += x.re[idx];
        si += x.im[idx];
      }
      c.re[a * dA + a2] = sr;
      c.im[a * dA + a2] = si;
    }
  }
  return c;
}

export function trace(a: ComplexMatrix): { re: number; im: number } {
  let re = 0;
  let im = 0;
  const n = Math.min(a.rows, a.cols);
  for (let i = 0; i < n; i++) {
    re += a.re[i * a.cols + i];
    im += a.im[i * a.cols + i];
  }
  return { re, im };
}

/** Re Tr(A·B) = Re ⟨A†, B⟩; for Hermitian A and B this is the real inner product ⟨A, B⟩. */
export function traceProductReal(a: ComplexMatrix, b: ComplexMatrix): number {
  if (a.cols !== b.rows || a.rows !== b.cols) throw new RangeError('traceProductReal: shape mismatch');
  let s = 0;
  for (let i = 0; i < a.rows; i++) {
    for (let k = 0; k < a.cols; k++) {
      const x = i * a.cols + k;
      const y = k * b.cols + i;
      s += a.re[x] * b.re[y] - a.im[x] * b.im[y];
    }
  }
  return s;
}

/** (A + A†)/2. */
export function hermitianPart(a: ComplexMatrix): ComplexMatrix {
  return plusAdjoint(a, 0.5, 'hermitianPart');
}

/** A + A† in one pass, without forming A† (bit-identical to add(a, adjoint(a))). */
export function hermitianSum(a: ComplexMatrix): ComplexMatrix {
  return plusAdjoint(a, 1, 'hermitianSum');
}

/** s·(A + A†); s = 1 skips the multiplication so the sum is exactly that of add(a, adjoint(a)). */
function plusAdjoint(a: ComplexMatrix, s: number, op: string): ComplexMatrix {
  if (!a.isSquare) throw new RangeError(`${op}: matrix is not square`);
  const n = a.rows;
  const c = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const re = a.re[i * n + j] + a.re[j * n + i];
      const im = a.im[i * n + j] - a.im[j * n + i];
      c.re[i * n + j] = s === 1 ? re : s * re;
      c.im[i * n + j] = s === 1 ? im : s * im;
    }
  }
  return c;
}

/** The largest max(|Re a_ij|, |Im a_ij|): a scale for tolerances and rescaling; NaN when an entry is not finite. */
export function largestEntry(a: ComplexMatrix): number {
  let size = 0;
  for (let k = 0; k < a.re.length; k++) {
    const entry = Math.max(Math.abs(a.re[k]), Math.abs(a.im[k]));
    if (!Number.isFinite(entry)) return NaN;
    size = Math.max(size, entry);
  }
  return size;
}

export function frobeniusNorm(a: ComplexMatrix): number {
  let s = 0;
  for (let k = 0; k < a.re.length; k++) s += a.re[k] * a.re[k] + a.im[k] * a.im[k];
  return Math.sqrt(s);
}

/** Below this sum of squares the plain Frobenius norm may have lost digits to underflow. */
const SQUARED_NORM_UNDERFLOW_GUARD = 1e-280;

/** Frobenius norm that neither overflows nor underflows (rescales by the largest entry when needed). */
export function frobeniusNormSafe(a: ComplexMatrix): number {
  let s = 0;
  for (let k = 0; k < a.re.length; k++) s += a.re[k] * a.re[k] + a.im[k] * a.im[k];
  if (Number.isFinite(s) && s > SQUARED_NORM_UNDERFLOW_GUARD) return Math.sqrt(s);
  let largest = 0;
  for (let k = 0; k < a.re.length; k++) largest = Math.max(largest, Math.abs(a.re[k]), Math.abs(a.im[k]));
  if (largest === 0 || !Number.isFinite(largest)) return largest;
  let scaled = 0;
  for (let k = 0; k < a.re.length; k++) {
    const r = a.re[k] / largest;
    const i = a.im[k] / largest;
    scaled += r * r + i * i;
  }
  return largest * Math.sqrt(scaled);
}

/** max |A_ij - (A†)_ij| relative to the Frobenius norm (0 for the zero matrix). */
export function hermiticityDefect(a: ComplexMatrix): number {
  if (!a.isSquare) return Infinity;
  const n = a.rows;
  let worst = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      const dr = a.re[i * n + j] - a.re[j * n + i];
      const di = a.im[i * n + j] + a.im[j * n + i];
      worst = Math.max(worst, Math.hypot(dr, di));
    }
  }
  const norm = frobeniusNorm(a);
  return norm === 0 ? 0 : worst / norm;
}

/** Rows [start, end) as a new matrix. */
export function rows(a: ComplexMatrix, start: number, end: number): ComplexMatrix {
  return new ComplexMatrix(end - start, a.cols, a.re.slice(start * a.cols, end * a.cols), a.im.slice(start * a.cols, end * a.cols));
}

/** Columns [start, end) as a new matrix. */
export function columns(a: ComplexMatrix, start: number, end: number): ComplexMatrix {
  const w = end - start;
  const c = new ComplexMatrix(a.rows, w);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < w; j++) {
      c.re[i * w + j] = a.re[i * a.cols + start + j];
      c.im[i * w + j] = a.im[i * a.cols + start + j];
    }
  }
  return c;
}

/** Horizontal concatenation [A | B | ...] of matrices with equal row counts. */
export function concatColumns(parts: readonly ComplexMatrix[], rows: number): ComplexMatrix {
  const cols = parts.reduce((s, p) => s + p.cols, 0);
  const c = new ComplexMatrix(rows, cols);
  let offset = 0;
  for (const p of parts) {
    if (p.rows !== rows) throw new RangeError('concatColumns: row counts differ');
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < p.cols; j++) {
        c.re[i * cols + offset + j] = p.re[i * p.cols + j];
        c.im[i * cols + offset + j] = p.im[i * p.cols + j];
      }
    }
    offset += p.cols;
  }
  return c;
}

/** Block-diagonal direct sum of square matrices. */
export function directSum(blocks: readonly ComplexMatrix[]): ComplexMatrix {
  const n = blocks.reduce((s, b) => s + b.rows, 0);
  const c = new ComplexMatrix(n, n);
  let offset = 0;
  for (const b of blocks) {
    for (let i = 0; i < b.rows; i++) {
      for (let j = 0; j < b.cols; j++) {
        c.re[(offset + i) * n + offset + j] = b.re[i * b.cols + j];
        c.im[(offset + i) * n + offset + j] = b.im[i * b.cols + j];
      }
    }
    offset += b.rows;
  }
  return c;
}

/** Square sub-block A[start:start+size, start:start+size]. */
export function diagonalBlock(a: ComplexMatrix, start: number, size: number): ComplexMatrix {
  const c = new ComplexMatrix(size, size);
  for (let i = 0; i < size; i++) {
    for (let j = 0; j < size; j++) {
      c.re[i * size + j] = a.re[(start + i) * a.cols + start + j];
      c.im[i * size + j] = a.im[(start + i) * a.cols + start + j];
    }
  }
  return c;
}
