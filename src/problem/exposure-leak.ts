// How far off an exposed face a feasible state can be, bounded in double-double arithmetic (docs/faces.md,
// "The leak in double-double"): the exposing combination's kernel block is read at about u² instead of the
// eigensolver's backward-error scale c·n·u.
import { createRequire } from 'node:module';
import type * as DoubleDouble from 'double-double';
import { addScaledInPlace, ComplexMatrix, frobeniusNorm, multiplyAdjointLeft, multiplyAdjointRight } from '../linear-algebra/complex-matrix.js';
import { eigvalsh } from '../linear-algebra/eigen.js';
import { BACKWARD_ERROR_CONSTANT, UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';
import type { LinearConstraint } from './model.js';

let doubleDouble: typeof DoubleDouble | undefined;

/** The package, required on the first exposure checked: commands that never meet a face do not load it at start. */
function arithmetic(): typeof DoubleDouble {
  doubleDouble ??= createRequire(import.meta.url)('double-double') as typeof DoubleDouble;
  return doubleDouble;
}

/** A double-double number as the library stores it: [low, high]. */
type Dd = number[];

/** Relative error of one double-double addition or double × double-double product, with room (Joldes–Muller–Popescu). */
const DD_STEP = 4 * UNIT_ROUNDOFF * UNIT_ROUNDOFF;

/**
 * The leak of the exposure Z = Σ y_i (b_i·1 − Γ_i) ⪰ 0 whose computed kernel basis is V (n × k), on the full space.
 * With a = Πx, b = (1 − Π)x for a unit x: x†Zx ≥ −ν|a|² − 2κ|a||b| + λ|b|², where ν = max(0, −λ_min(V†ZV))/σ²,
 * κ = ‖ZV‖_F/σ (σ² ≤ λ_min(V†V)) and λ ≤ λ_min(Z + γVV†) on ker V†; Tr(Zρ) = 0 for feasible ρ then gives
 * √ε ≤ (κ + √(κ² + λν))/λ. V†ZV and ZV are summed in double-double from the data as given, so ν and κ carry
 * the data's own distance from an exact face, not the eigensolver's. Returns ε with Tr((1 − Π)ρ) ≤ ε for every
 * feasible ρ, Π the orthogonal projector onto range V; null when λ is not positive.
 */
export function compensatedLeak(
  constraints: readonly LinearConstraint[],
  multipliers: readonly number[],
  computed: ComplexMatrix,
  kernel: ComplexMatrix,
): number | null {
  const { ddAddDd, ddMultDouble2, twoProduct } = arithmetic();
  const n = computed.rows;
  const k = kernel.cols;
  const u = UNIT_ROUNDOFF;
  // Z entrywise in double-double; each entry is a sum of `terms` exact products, |error| ≤ terms·DD_STEP·Σ|term|.
  const zRe: Dd[] = Array.from({ length: n * n }, () => [0, 0]);
  const zIm: Dd[] = Array.from({ length: n * n }, () => [0, 0]);
  let absoluteSum = 0;
  let terms = 1;
  constraints.forEach((c, i) => {
    const y = multipliers[i];
    if (y === 0) return;
    terms++;
    let largest = Math.abs(c.lower);
    for (let t = 0; t < n * n; t++) {
      zRe[t] = ddAddDd(zRe[t], twoProduct(-y, c.operator.re[t]));
      zIm[t] = ddAddDd(zIm[t], twoProduct(-y, c.operator.im[t]));
      largest = Math.max(largest, Math.abs(c.operator.re[t]) + Math.abs(c.operator.im[t]));
    }
    for (let a = 0; a < n; a++) zRe[a * n + a] = ddAddDd(zRe[a * n + a], twoProduct(y, c.lower));
    absoluteSum += Math.abs(y) * 2 * largest;
  });
  const entryError = terms * DD_STEP * absoluteSum;

  // T = ZV (n × k) and M = V†T (k × k) in double-double; each sum has 4n products of a double and a double-double.
  let largestV = 0;
  for (let t = 0; t < n * k; t++) largestV = Math.max(largestV, Math.abs(kernel.re[t]) + Math.abs(kernel.im[t]));
  const tRe: Dd[] = new Array(n * k);
  const tIm: Dd[] = new Array(n * k);
  let zAbsoluteRow = 0;
  for (let a = 0; a < n; a++) {
    let row = 0;
    for (let l = 0; l < n; l++) row += Math.abs(zRe[a * n + l][1]) + Math.abs(zIm[a * n + l][1]);
    zAbsoluteRow = Math.max(zAbsoluteRow, row * (1 + 4 * n * u) + n * entryError);
    for (let j = 0; j < k; j++) {
      let re: Dd = [0, 0];
      let im: Dd = [0, 0];
      for (let l = 0; l < n; l++) {
        const vr = kernel.re[l * k + j];
        const vi = kernel.im[l * k + j];
        const zr = zRe[a * n + l];
        const zi = zIm[a * n + l];
        re = ddAddDd(ddAddDd(re, ddMultDouble2(vr, zr)), ddMultDouble2(-vi, zi));
        im = ddAddDd(ddAddDd(im, ddMultDouble2(vi, zr)), ddMultDouble2(vr, zi));
      }
      tRe[a * k + j] = re;
      tIm[a * k + j] = im;
    }
  }
  // |T − ZV| entrywise: the sums' own rounding (≤ 4n steps of their absolute size) and Z's entry error.
  const tError = 4 * n * 2 * DD_STEP * zAbsoluteRow * largestV + n * entryError * largestV;
  let tSquares = 0;
  let tLargest = 0;
  for (let t = 0; t < n * k; t++) {
    const re = tRe[t][1] + tRe[t][0];
    const im = tIm[t][1] + tIm[t][0];
    tSquares += re * re + im * im;
    tLargest = Math.max(tLargest, Math.abs(re) + Math.abs(im));
  }
  const tNorm = Math.sqrt(tSquares) * (1 + 2 * n * k * u) + Math.sqrt(n * k) * 2 * (tError + u * tLargest);

  const m = new ComplexMatrix(k, k);
  for (let p = 0; p < k; p++) {
    for (let q = 0; q < k; q++) {
      let re: Dd = [0, 0];
      let im: Dd = [0, 0];
      for (let l = 0; l < n; l++) {
        const vr = kernel.re[l * k + p];
        const vi = -kernel.im[l * k + p];
        const tr = tRe[l * k + q];
        const ti = tIm[l * k + q];
        re = ddAddDd(ddAddDd(re, ddMultDouble2(vr, tr)), ddMultDouble2(-vi, ti));
        im = ddAddDd(ddAddDd(im, ddMultDouble2(vi, tr)), ddMultDouble2(vr, ti));
      }
      m.re[p * k + q] = re[1] + re[0];
      m.im[p * k + q] = im[1] + im[0];
    }
  }
  // λ_min(V†ZV) from below: M's rounding to doubles, the sums' rounding and T's error (n·|V|·tError), then eigvalsh.
  const mEntryError = 2 * u * (tLargest + tError) * n * largestV + 4 * n * 2 * DD_STEP * n * largestV * (tLargest + tError) + 2 * n * largestV * tError;
  const mValues = eigvalsh(m);
  const mSmallest = mValues[0] - BACKWARD_ERROR_CONSTANT * k * u * frobeniusNorm(m) - 2 * k * mEntryError;

  // σ² ≤ λ_min(V†V).
  const sigmaSquared = 1 - isometryDefect(kernel);
  if (!(sigmaSquared > 0.5)) return null;

  // λ ≤ min of x†Zx over unit x ⊥ range V: λ_min(Ẑ + γVV†), less its entrywise error and eigvalsh's backward error.
  const shifted = computed.clone();
  const gamma = Math.max(frobeniusNorm(computed), Number.MIN_VALUE);
  addScaledInPlace(shifted, multiplyAdjointRight(kernel, kernel), gamma);
  // Entrywise (|Re| + |Im|) error of the computed Ẑ + γVV† against Z + γVV†: Ẑ against the double-double Z, that Z's
  // own error, the k-term products of V and the final additions.
  let zHatError = 0;
  let largestShifted = 0;
  for (let t = 0; t < n * n; t++) {
    const re = Math.abs(computed.re[t] - (zRe[t][1] + zRe[t][0]));
    const im = Math.abs(computed.im[t] - (zIm[t][1] + zIm[t][0]));
    zHatError = Math.max(zHatError, re + im + 2 * u * (Math.abs(computed.re[t]) + Math.abs(computed.im[t])));
    largestShifted = Math.max(largestShifted, Math.abs(shifted.re[t]) + Math.abs(shifted.im[t]));
  }
  const shiftedEntryError = zHatError + 2 * entryError + 4 * (k + 2) * u * gamma * k * largestV * largestV + 2 * u * largestShifted;
  const lambda = eigvalsh(shifted)[0] - BACKWARD_ERROR_CONSTANT * n * u * frobeniusNorm(shifted) - n * shiftedEntryError;
  if (!(lambda > 0)) return null;

  const nu = Math.max(0, -mSmallest) / sigmaSquared;
  const kappa = tNorm / Math.sqrt(sigmaSquared);
  const root = (kappa + Math.sqrt(kappa * kappa + lambda * nu)) / lambda;
  // The last few operations in doubles: a relative allowance of 64u covers their rounding.
  return Math.min(1, root * root * (1 + 64 * u));
}

/** g ≥ ‖P†P − 1‖₂ for P as stored (orthonormal only to rounding): the Gram matrix's defect in Frobenius norm plus its n-term rounding. */
export function isometryDefect(isometry: ComplexMatrix): number {
  const k = isometry.cols;
  const gram = multiplyAdjointLeft(isometry, isometry);
  let largest = 0;
  for (let a = 0; a < k; a++) largest = Math.max(largest, gram.re[a * k + a]);
  for (let a = 0; a < k; a++) gram.re[a * k + a] -= 1;
  return frobeniusNorm(gram) * (1 + 2 * k * UNIT_ROUNDOFF) + 2 * k * (isometry.rows + 2) * UNIT_ROUNDOFF * Math.max(1, largest);
}

