// The Hermitian eigensolver: Householder tridiagonalisation + implicit QL. The slower reference methods it is
// compared with (cyclic Jacobi, ml-matrix on the real embedding) live in src/bench/reference-eigensolvers.ts.
import { ComplexMatrix } from './complex-matrix.js';
import { pollAtOrder, STAGES_PER_POLL } from './interruption.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from './rounding.js';

/** Eigendecomposition A = V·diag(values)·V† of a Hermitian matrix; values ascending, eigenvectors in columns. */
export interface HermitianEigen {
  values: Float64Array;
  vectors: ComplexMatrix;
}


/** QL iterations allowed per eigenvalue before giving up (typically 1–3 are needed; LAPACK allows 30). */
const MAX_QL_ITERATIONS_PER_EIGENVALUE = 30;

/** Checks shape and finiteness; every eigensolver entry point calls this first. */
export function assertFiniteSquare(a: ComplexMatrix, caller: string): void {
  if (!a.isSquare) throw new RangeError(`${caller}: matrix is ${a.rows}x${a.cols}, not square`);
  const n = a.rows;
  for (let k = 0; k < a.re.length; k++) {
    if (!Number.isFinite(a.re[k]) || !Number.isFinite(a.im[k])) {
      const i = Math.floor(k / n);
      const j = k - i * n;
      const bad = Number.isFinite(a.re[k]) ? a.im[k] : a.re[k];
      throw new RangeError(`${caller}: entry (${i}, ${j}) is not finite (${bad})`);
    }
  }
}

/** Largest exponent k with 2^k and 2^-k both finite normal doubles. */
const MAX_SCALE_EXPONENT = 1021;

/** Largest |entry| rounded to a power of two, so that scaling by it is exact; 0 for the zero matrix. */
export function powerOfTwoScale(re: Float64Array, im: Float64Array): number {
  let largest = 0;
  for (let k = 0; k < re.length; k++) {
    const r = Math.abs(re[k]);
    const i = Math.abs(im[k]);
    if (r > largest) largest = r;
    if (i > largest) largest = i;
  }
  if (largest === 0) return 0;
  // Exponent clamped so that both the scale and its reciprocal are finite normal numbers.
  return 2 ** Math.min(MAX_SCALE_EXPONENT, Math.max(-MAX_SCALE_EXPONENT, Math.round(Math.log2(largest))));
}

/**
 * The state after Householder tridiagonalisation of the (scaled, symmetrised) input:
 * T = D·T_real·D† with T_real real symmetric tridiagonal (diagonal `diagonal`, subdiagonal `offDiagonal`,
 * offDiagonal[i] couples i and i+1, last entry 0), D = diag(phase), A = Q·T·Q†, Q = H_0·H_1···H_{n-3},
 * H_k = 1 − tau_k·u_k·u_k† with u_k (first entry 1) stored in row k, columns k+1..n−1 of (workRe, workIm).
 * The remaining arrays are scratch space; one such record per size is cached and reused.
 */
interface Tridiagonal {
  n: number;
  workRe: Float64Array;
  workIm: Float64Array;
  tau: Float64Array;
  diagonal: Float64Array;
  offDiagonal: Float64Array;
  phaseRe: Float64Array;
  phaseIm: Float64Array;
  subRe: Float64Array;
  subIm: Float64Array;
  pRe: Float64Array;
  pIm: Float64Array;
  /** QL rotations accumulated from the identity: column j = j-th eigenvector of T_real. */
  rotations: Float64Array;
  cosines: Float64Array;
  sines: Float64Array;
  /** Back-transformation buffers: real and imaginary parts of four eigenvectors. */
  back: Float64Array[];
}

/**
 * Squared norm of a column part below which the Householder step treats it as zero: u⁴ ≈ 1.5e-64,
 * i.e. a part of norm below u² ≈ 1.2e-32 relative to the largest entry (far below the backward error u).
 */
const NEGLIGIBLE_COLUMN_SQUARED = UNIT_ROUNDOFF ** 4;

/** Scratch buffers reused across calls of the same size (the optimiser calls eigh thousands of times). */
const workspaces = new Map<number, Tridiagonal>();

/** Distinct sizes whose scratch buffers are kept; beyond this the cache is cleared. */
const MAX_CACHED_WORKSPACES = 16;

/** Sizes above this get fresh buffers each call (their O(n³) work dwarfs allocation; keeps memory bounded). */
const MAX_CACHED_WORKSPACE_SIZE = 512;

function workspaceFor(n: number): Tridiagonal {
  const cached = workspaces.get(n);
  if (cached !== undefined) return cached;
  if (workspaces.size >= MAX_CACHED_WORKSPACES) workspaces.clear();
  const created: Tridiagonal = {
    n,
    workRe: new Float64Array(n * n),
    workIm: new Float64Array(n * n),
    tau: new Float64Array(n),
    diagonal: new Float64Array(n),
    offDiagonal: new Float64Array(n),
    phaseRe: new Float64Array(n),
    phaseIm: new Float64Array(n),
    subRe: new Float64Array(n),
    subIm: new Float64Array(n),
    pRe: new Float64Array(n),
    pIm: new Float64Array(n),
    rotations: new Float64Array(n * n),
    cosines: new Float64Array(n),
    sines: new Float64Array(n),
    back: Array.from({ length: 8 }, () => new Float64Array(n)),
  };
  if (n <= MAX_CACHED_WORKSPACE_SIZE) workspaces.set(n, created);
  return created;
}

/**
 * Householder reduction of the Hermitian part of `input` (scaled by a power of two to keep norms
 * representable) to real symmetric tridiagonal form; only the lower triangle is updated.
 */
function tridiagonalise(input: ComplexMatrix, scale: number): Tridiagonal {
  const n = input.rows;
  const ws = workspaceFor(n);
  const { workRe, workIm, tau, diagonal, offDiagonal, phaseRe, phaseIm, subRe, subIm, pRe, pIm } = ws;
  const inv = 1 / scale;
  const inRe = input.re;
  const inIm = input.im;
  // Symmetrise into the lower triangle: L_ij = (A_ij + conj(A_ji))/2, j ≤ i.
  for (let i = 0; i < n; i++) {
    const row = i * n;
    for (let j = 0; j < i; j++) {
      workRe[row + j] = 0.5 * (inRe[row + j] + inRe[j * n + i]) * inv;
      workIm[row + j] = 0.5 * (inIm[row + j] - inIm[j * n + i]) * inv;
    }
    workRe[row + i] = inRe[row + i] * inv;
    workIm[row + i] = 0;
  }
  for (let k = 0; k + 2 < n; k++) {
    if (k % STAGES_PER_POLL === 0) pollAtOrder(n);
    const k1 = k + 1;
    // x = column k below the diagonal; the reflector maps it onto a multiple of e_{k+1}.
    const alphaRe = workRe[k1 * n + k];
    const alphaIm = workIm[k1 * n + k];
    let sigma = 0;
    for (let i = k + 2; i < n; i++) sigma += workRe[i * n + k] ** 2 + workIm[i * n + k] ** 2;
    if (sigma <= NEGLIGIBLE_COLUMN_SQUARED) {
      // Entries this small (the matrix is scaled to max |entry| ≈ 1) are dropped: a perturbation far
      // below the backward error, and it keeps ‖x‖ away from the subnormal range.
      tau[k] = 0;
      subRe[k] = alphaRe;
      subIm[k] = alphaIm;
      continue;
    }
    const alphaAbs = Math.hypot(alphaRe, alphaIm);
    const xNorm = Math.sqrt(alphaAbs * alphaAbs + sigma);
    // Phase of alpha (1 when alpha = 0) chosen so u_{k+1} = alpha + phase·‖x‖ has no cancellation;
    // renormalised because a subnormal alpha gives alpha/|alpha| a visibly wrong modulus.
    let phRe = alphaAbs === 0 ? 1 : alphaRe / alphaAbs;
    let phIm = alphaAbs === 0 ? 0 : alphaIm / alphaAbs;
    const phAbs = Math.hypot(phRe, phIm);
    phRe /= phAbs;
    phIm /= phAbs;
    subRe[k] = -phRe * xNorm;
    subIm[k] = -phIm * xNorm;
    // u = x + phase·‖x‖·e_{k+1}, divided by its first entry w so that u_{k+1} = 1 and every intermediate
    // stays at the scale of the matrix however small x is. tau = 2/(u†u) from the stored u itself, so the
    // reflector is unitary to rounding even if the phase is slightly off.
    const wRe = alphaRe + phRe * xNorm;
    const wIm = alphaIm + phIm * xNorm;
    const wAbs2 = wRe * wRe + wIm * wIm;
    const uRow = k * n;
    workRe[uRow + k1] = 1;
    workIm[uRow + k1] = 0;
    let uNorm2 = 1;
    for (let i = k + 2; i < n; i++) {
      const xr = workRe[i * n + k];
      const xi = workIm[i * n + k];
      const vr = (xr * wRe + xi * wIm) / wAbs2;
      const vi = (xi * wRe - xr * wIm) / wAbs2;
      workRe[uRow + i] = vr;
      workIm[uRow + i] = vi;
      uNorm2 += vr * vr + vi * vi;
    }
    const t = 2 / uNorm2;
    tau[k] = t;
    // p = tau·S·u over the trailing block S = A[k+1:, k+1:] from its lower triangle.
    for (let i = k1; i < n; i++) {
      pRe[i] = 0;
      pIm[i] = 0;
    }
    // Two rows per pass share the loads of u_j and the updates of p_j.
    let r = k1;
    for (; r + 1 < n; r += 2) {
      const row0 = r * n;
      const row1 = row0 + n;
      const u0R = workRe[uRow + r];
      const u0I = workIm[uRow + r];
      const u1R = workRe[uRow + r + 1];
      const u1I = workIm[uRow + r + 1];
      let s0R = workRe[row0 + r] * u0R;
      let s0I = workRe[row0 + r] * u0I;
      let s1R = workRe[row1 + r + 1] * u1R;
      let s1I = workRe[row1 + r + 1] * u1I;
      for (let j = k1; j < r; j++) {
        const aR = workRe[row0 + j];
        const aI = workIm[row0 + j];
        const bR = workRe[row1 + j];
        const bI = workIm[row1 + j];
        const ujR = workRe[uRow + j];
        const ujI = workIm[uRow + j];
        // S_ij·u_j into p_i, and S_ji·u_i = conj(S_ij)·u_i into p_j.
        s0R += aR * ujR - aI * ujI;
        s0I += aR * ujI + aI * ujR;
        s1R += bR * ujR - bI * ujI;
        s1I += bR * ujI + bI * ujR;
        pRe[j] += aR * u0R + aI * u0I + bR * u1R + bI * u1I;
        pIm[j] += aR * u0I - aI * u0R + bR * u1I - bI * u1R;
      }
      // The coupling S_{r+1,r} between the two rows.
      const cR = workRe[row1 + r];
      const cI = workIm[row1 + r];
      s1R += cR * u0R - cI * u0I;
      s1I += cR * u0I + cI * u0R;
      s0R += cR * u1R + cI * u1I;
      s0I += cR * u1I - cI * u1R;
      pRe[r] += s0R;
      pIm[r] += s0I;
      pRe[r + 1] += s1R;
      pIm[r + 1] += s1I;
    }
    for (; r < n; r++) {
      const row = r * n;
      const uiR = workRe[uRow + r];
      const uiI = workIm[uRow + r];
      let sR = workRe[row + r] * uiR;
      let sI = workRe[row + r] * uiI;
      for (let j = k1; j < r; j++) {
        const aR = workRe[row + j];
        const aI = workIm[row + j];
        const ujR = workRe[uRow + j];
        const ujI = workIm[uRow + j];
        sR += aR * ujR - aI * ujI;
        sI += aR * ujI + aI * ujR;
        pRe[j] += aR * uiR + aI * uiI;
        pIm[j] += aR * uiI - aI * uiR;
      }
      pRe[r] += sR;
      pIm[r] += sI;
    }
    let upRe = 0; // u†p (real up to rounding)
    for (let i = k1; i < n; i++) {
      pRe[i] *= t;
      pIm[i] *= t;
      upRe += workRe[uRow + i] * pRe[i] + workIm[uRow + i] * pIm[i];
    }
    const half = 0.5 * t * upRe;
    // q = p − half·u (kept in p), then S −= u q† + q u† on the lower triangle.
    for (let i = k1; i < n; i++) {
      pRe[i] -= half * workRe[uRow + i];
      pIm[i] -= half * workIm[uRow + i];
    }
    // Two rows per pass share the loads of u_j and q_j.
    let i = k1;
    for (; i + 1 < n; i += 2) {
      const row0 = i * n;
      const row1 = row0 + n;
      const u0R = workRe[uRow + i];
      const u0I = workIm[uRow + i];
      const q0R = pRe[i];
      const q0I = pIm[i];
      const u1R = workRe[uRow + i + 1];
      const u1I = workIm[uRow + i + 1];
      const q1R = pRe[i + 1];
      const q1I = pIm[i + 1];
      for (let j = k1; j < i; j++) {
        const ujR = workRe[uRow + j];
        const ujI = workIm[uRow + j];
        const qjR = pRe[j];
        const qjI = pIm[j];
        // u_i·conj(q_j) + q_i·conj(u_j)
        workRe[row0 + j] -= u0R * qjR + u0I * qjI + q0R * ujR + q0I * ujI;
        workIm[row0 + j] -= u0I * qjR - u0R * qjI + q0I * ujR - q0R * ujI;
        workRe[row1 + j] -= u1R * qjR + u1I * qjI + q1R * ujR + q1I * ujI;
        workIm[row1 + j] -= u1I * qjR - u1R * qjI + q1I * ujR - q1R * ujI;
      }
      // Entry (i+1, i) and the two diagonal entries.
      workRe[row1 + i] -= u1R * q0R + u1I * q0I + q1R * u0R + q1I * u0I;
      workIm[row1 + i] -= u1I * q0R - u1R * q0I + q1I * u0R - q1R * u0I;
      workRe[row0 + i] -= 2 * (u0R * q0R + u0I * q0I);
      workRe[row1 + i + 1] -= 2 * (u1R * q1R + u1I * q1I);
    }
    for (; i < n; i++) {
      const row = i * n;
      const uiR = workRe[uRow + i];
      const uiI = workIm[uRow + i];
      const qiR = pRe[i];
      const qiI = pIm[i];
      for (let j = k1; j < i; j++) {
        const ujR = workRe[uRow + j];
        const ujI = workIm[uRow + j];
        const qjR = pRe[j];
        const qjI = pIm[j];
        workRe[row + j] -= uiR * qjR + uiI * qjI + qiR * ujR + qiI * ujI;
        workIm[row + j] -= uiI * qjR - uiR * qjI + qiI * ujR - qiR * ujI;
      }
      workRe[row + i] -= 2 * (uiR * qiR + uiI * qiI);
    }
  }
  for (let k = 0; k < n; k++) diagonal[k] = workRe[k * n + k];
  if (n >= 2) {
    subRe[n - 2] = workRe[(n - 1) * n + n - 2];
    subIm[n - 2] = workIm[(n - 1) * n + n - 2];
  }
  // Diagonal phases: phase_{i+1} = phase_i·e_i/|e_i| makes every subdiagonal entry real and ≥ 0.
  if (n > 0) {
    offDiagonal[n - 1] = 0;
    phaseRe[0] = 1;
    phaseIm[0] = 0;
  }
  for (let i = 0; i + 1 < n; i++) {
    const m = Math.hypot(subRe[i], subIm[i]);
    offDiagonal[i] = m;
    if (m === 0) {
      phaseRe[i + 1] = 1;
      phaseIm[i + 1] = 0;
    } else {
      const cR = subRe[i] / m;
      const cI = subIm[i] / m;
      const nextRe = phaseRe[i] * cR - phaseIm[i] * cI;
      const nextIm = phaseRe[i] * cI + phaseIm[i] * cR;
      // Renormalise so rounding in the running product does not drift away from modulus 1.
      const modulus = Math.hypot(nextRe, nextIm);
      phaseRe[i + 1] = nextRe / modulus;
      phaseIm[i + 1] = nextIm / modulus;
    }
  }
  return ws;
}

/**
 * Implicit symmetric QL with Wilkinson shifts on the tridiagonal (d, e), e[i] coupling i and i+1.
 * If `rotations` is given (n×n row-major, column j = j-th Schur vector) the rotations are accumulated
 * in it: each sweep's (c, s) pairs are recorded, then applied row by row as one chain (contiguous access,
 * one load and one store per entry instead of two of each).
 * Deflation: |e_m| ≤ ε·(|d_m| + |d_{m+1}|) (local test, keeps small eigenvalues of graded matrices
 * accurate) or |e_m| ≤ ε·‖T‖ (needed for convergence when a cluster of eigenvalues sits at rounding level).
 */
function tridiagonalQL(
  d: Float64Array,
  e: Float64Array,
  rotations: Float64Array | null,
  cosines: Float64Array,
  sines: Float64Array,
): void {
  const n = d.length;
  const eps = Number.EPSILON;
  // Norm-relative floor: deflating below u·‖T‖ perturbs T by less than the reduction already did.
  let normT = 0;
  for (let i = 0; i < n; i++) normT = Math.max(normT, Math.abs(d[i]) + Math.abs(e[i]) + (i > 0 ? Math.abs(e[i - 1]) : 0));
  const absoluteFloor = eps * normT;
  for (let l = 0; l < n; l++) {
    if (l % STAGES_PER_POLL === 0) pollAtOrder(n);
    let iterations = 0;
    for (;;) {
      let m = l;
      for (; m < n - 1; m++) {
        const em = Math.abs(e[m]);
        if (em <= absoluteFloor || em <= eps * (Math.abs(d[m]) + Math.abs(d[m + 1]))) break;
      }
      if (m === l) break;
      if (++iterations > MAX_QL_ITERATIONS_PER_EIGENVALUE) {
        throw new Error(`eigh: QL iteration did not converge for eigenvalue ${l} of ${n}`);
      }
      // Wilkinson shift from the leading 2×2 block at l.
      let g = (d[l + 1] - d[l]) / (2 * e[l]);
      let r = fastHypot(g, 1);
      g = d[m] - d[l] + e[l] / (g + (g >= 0 ? r : -r));
      let s = 1;
      let c = 1;
      let p = 0;
      let i = m - 1;
      let underflow = false;
      for (; i >= l; i--) {
        const f = s * e[i];
        const b = c * e[i];
        r = fastHypot(f, g);
        e[i + 1] = r;
        if (r === 0) {
          // Exact deflation inside the sweep: finish it and restart at l.
          d[i + 1] -= p;
          e[m] = 0;
          underflow = true;
          break;
        }
        s = f / r;
        c = g / r;
        g = d[i + 1] - p;
        r = (d[i] - g) * s + 2 * c * b;
        p = s * r;
        d[i + 1] = g + p;
        g = c * r - b;
        cosines[i] = c;
        sines[i] = s;
      }
      if (rotations !== null) applyRotationChain(rotations, n, i + 1, m, cosines, sines);
      if (underflow) continue;
      d[l] -= p;
      e[l] = g;
      e[m] = 0;
    }
  }
}

/**
 * Applies the sweep's rotations i = last−1 … first to columns (i, i+1) of Z, i.e. for every row
 * Z[k][i+1] ← s_i·Z[k][i] + c_i·Z[k][i+1], Z[k][i] ← c_i·Z[k][i] − s_i·Z[k][i+1], carrying Z[k][i] along.
 */
function applyRotationChain(z: Float64Array, n: number, first: number, last: number, cosines: Float64Array, sines: Float64Array): void {
  if (first >= last) return;
  // Four rows at a time: each row's carry is a serial dependency, so interleaving hides the latency.
  let k = 0;
  for (; k + 3 < n; k += 4) {
    const r0 = k * n;
    const r1 = r0 + n;
    const r2 = r1 + n;
    const r3 = r2 + n;
    let c0 = z[r0 + last];
    let c1 = z[r1 + last];
    let c2 = z[r2 + last];
    let c3 = z[r3 + last];
    for (let i = last - 1; i >= first; i--) {
      const c = cosines[i];
      const s = sines[i];
      const a0 = z[r0 + i];
      const a1 = z[r1 + i];
      const a2 = z[r2 + i];
      const a3 = z[r3 + i];
      z[r0 + i + 1] = s * a0 + c * c0;
      z[r1 + i + 1] = s * a1 + c * c1;
      z[r2 + i + 1] = s * a2 + c * c2;
      z[r3 + i + 1] = s * a3 + c * c3;
      c0 = c * a0 - s * c0;
      c1 = c * a1 - s * c1;
      c2 = c * a2 - s * c2;
      c3 = c * a3 - s * c3;
    }
    z[r0 + first] = c0;
    z[r1 + first] = c1;
    z[r2 + first] = c2;
    z[r3 + first] = c3;
  }
  for (; k < n; k++) {
    const row = k * n;
    let carry = z[row + last];
    for (let i = last - 1; i >= first; i--) {
      const zi = z[row + i];
      const c = cosines[i];
      const s = sines[i];
      z[row + i + 1] = s * zi + c * carry;
      carry = c * zi - s * carry;
    }
    z[row + first] = carry;
  }
}

/** |x|, |y| inside this range square without overflow or underflow. */
const HYPOT_SAFE_MAX = 1e150;
const HYPOT_SAFE_MIN = 1e-150;

/** √(x² + y²); Math.hypot is several times slower in V8 and only needed near the exponent limits. */
function fastHypot(x: number, y: number): number {
  const big = Math.max(Math.abs(x), Math.abs(y));
  if (big < HYPOT_SAFE_MAX && big > HYPOT_SAFE_MIN) return Math.sqrt(x * x + y * y);
  return Math.hypot(x, y);
}

/** Indices sorting `values` ascending. */
export function ascendingOrder(values: Float64Array): Int32Array {
  const n = values.length;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  // Insertion sort: QL output is nearly sorted and n is small, so this beats Array.prototype.sort.
  for (let i = 1; i < n; i++) {
    const key = order[i];
    const v = values[key];
    let j = i - 1;
    while (j >= 0 && values[order[j]] > v) {
      order[j + 1] = order[j];
      j--;
    }
    order[j + 1] = key;
  }
  return order;
}

/**
 * Native complex Hermitian eigensolver: Householder reduction to real symmetric tridiagonal form
 * (a diagonal phase makes the subdiagonal real), implicit QL with Wilkinson shifts accumulating the
 * rotations, then back-transformation through the phases and reflectors. O(n³), backward stable.
 */
export function eighHouseholder(input: ComplexMatrix): HermitianEigen {
  assertFiniteSquare(input, 'eigh');
  const n = input.rows;
  const scale = powerOfTwoScale(input.re, input.im);
  if (scale === 0) return { values: new Float64Array(n), vectors: ComplexMatrix.identity(n) };
  const tri = tridiagonalise(input, scale);
  const d = tri.diagonal;
  const e = tri.offDiagonal;
  const z = tri.rotations;
  z.fill(0);
  for (let i = 0; i < n; i++) z[i * n + i] = 1;
  tridiagonalQL(d, e, z, tri.cosines, tri.sines);
  const order = ascendingOrder(d);
  const values = new Float64Array(n);
  for (let j = 0; j < n; j++) values[j] = d[order[j]] * scale;
  const vectors = new ComplexMatrix(n, n);
  const outRe = vectors.re;
  const outIm = vectors.im;
  const { workRe, workIm, tau, phaseRe, phaseIm } = tri;
  // Four eigenvectors per pass share each load of a reflector.
  const { back } = tri;
  const w0Re = back[0];
  const w0Im = back[1];
  const w1Re = back[2];
  const w1Im = back[3];
  const w2Re = back[4];
  const w2Im = back[5];
  const w3Re = back[6];
  const w3Im = back[7];
  for (let jj = 0; jj < n; jj += 4) {
    if (jj % STAGES_PER_POLL === 0) pollAtOrder(n);
    const count = Math.min(4, n - jj);
    // Missing vectors of the last group repeat the first one; their results are not stored.
    const z0 = order[jj];
    const z1 = count > 1 ? order[jj + 1] : z0;
    const z2 = count > 2 ? order[jj + 2] : z0;
    const z3 = count > 3 ? order[jj + 3] : z0;
    // w = D·z (z = a column of the rotations), then w ← H_k·w for k = n−3 … 0.
    for (let i = 0; i < n; i++) {
      const row = i * n;
      const pr = phaseRe[i];
      const pi = phaseIm[i];
      const a0 = z[row + z0];
      const a1 = z[row + z1];
      const a2 = z[row + z2];
      const a3 = z[row + z3];
      w0Re[i] = pr * a0;
      w0Im[i] = pi * a0;
      w1Re[i] = pr * a1;
      w1Im[i] = pi * a1;
      w2Re[i] = pr * a2;
      w2Im[i] = pi * a2;
      w3Re[i] = pr * a3;
      w3Im[i] = pi * a3;
    }
    for (let k = n - 3; k >= 0; k--) {
      const t = tau[k];
      if (t === 0) continue;
      const uRow = k * n;
      let s0R = 0;
      let s0I = 0;
      let s1R = 0;
      let s1I = 0;
      let s2R = 0;
      let s2I = 0;
      let s3R = 0;
      let s3I = 0;
      for (let i = k + 1; i < n; i++) {
        const uR = workRe[uRow + i];
        const uI = workIm[uRow + i];
        s0R += uR * w0Re[i] + uI * w0Im[i];
        s0I += uR * w0Im[i] - uI * w0Re[i];
        s1R += uR * w1Re[i] + uI * w1Im[i];
        s1I += uR * w1Im[i] - uI * w1Re[i];
        s2R += uR * w2Re[i] + uI * w2Im[i];
        s2I += uR * w2Im[i] - uI * w2Re[i];
        s3R += uR * w3Re[i] + uI * w3Im[i];
        s3I += uR * w3Im[i] - uI * w3Re[i];
      }
      s0R *= t;
      s0I *= t;
      s1R *= t;
      s1I *= t;
      s2R *= t;
      s2I *= t;
      s3R *= t;
      s3I *= t;
      for (let i = k + 1; i < n; i++) {
        const uR = workRe[uRow + i];
        const uI = workIm[uRow + i];
        w0Re[i] -= s0R * uR - s0I * uI;
        w0Im[i] -= s0R * uI + s0I * uR;
        w1Re[i] -= s1R * uR - s1I * uI;
        w1Im[i] -= s1R * uI + s1I * uR;
        w2Re[i] -= s2R * uR - s2I * uI;
        w2Im[i] -= s2R * uI + s2I * uR;
        w3Re[i] -= s3R * uR - s3I * uI;
        w3Im[i] -= s3R * uI + s3I * uR;
      }
    }
    for (let i = 0; i < n; i++) {
      const row = i * n + jj;
      outRe[row] = w0Re[i];
      outIm[row] = w0Im[i];
      if (count > 1) {
        outRe[row + 1] = w1Re[i];
        outIm[row + 1] = w1Im[i];
      }
      if (count > 2) {
        outRe[row + 2] = w2Re[i];
        outIm[row + 2] = w2Im[i];
      }
      if (count > 3) {
        outRe[row + 3] = w3Re[i];
        outIm[row + 3] = w3Im[i];
      }
    }
  }
  return { values, vectors };
}

/** Eigenvalues only (ascending): Householder + QL without accumulating vectors, about 4× cheaper than eigh. */
export function eigvalsh(input: ComplexMatrix): Float64Array {
  assertFiniteSquare(input, 'eigvalsh');
  const n = input.rows;
  const scale = powerOfTwoScale(input.re, input.im);
  if (scale === 0) return new Float64Array(n);
  const tri = tridiagonalise(input, scale);
  tridiagonalQL(tri.diagonal, tri.offDiagonal, null, tri.cosines, tri.sines);
  const values = tri.diagonal.slice().sort();
  for (let j = 0; j < n; j++) values[j] *= scale;
  return values;
}

/**
 * The project's Hermitian eigensolver. Reads the Hermitian part (A + A†)/2 of its input. Householder + QL at
 * every size: it beats cyclic Jacobi from d = 2 on (README, "Small sizes" table); a 1×1 matrix is its own
 * decomposition.
 */
export function eigh(a: ComplexMatrix): HermitianEigen {
  assertFiniteSquare(a, 'eigh');
  if (a.rows === 1) return { values: Float64Array.of(a.re[0]), vectors: ComplexMatrix.identity(1) };
  return eighHouseholder(a);
}
