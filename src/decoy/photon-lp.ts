// Decoy-state bounds by linear programming over the photon-number yields (Lo, Ma, Chen, PRL 94, 230504 (2005);
// Ma, Qi, Zhao, Lo, PRA 72, 012326 (2005)), solved by HiGHS and certified from its duals by weak duality
// recomputed here (docs/decoy.md, "Photon-number LP" and "Certificate").
import type { Highs } from 'highs';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

/** Poisson weights e^{−μ}μⁿ/n! for n = 0..cutoff and a rigorous upper bound on the mass above the cut-off. */
export function poissonWeights(intensity: number, cutoff: number): { weights: number[]; tail: number } {
  const weights: number[] = [Math.exp(-intensity)];
  for (let n = 1; n <= cutoff; n++) weights.push((weights[n - 1] * intensity) / n);
  // The tail is summed term by term (never as 1 − Σ, which cancels); once the ratio μ/(n+1) is below 1/2 the
  // remainder after a term t is below t, so doubling the last term bounds it.
  let term = (weights[cutoff] * intensity) / (cutoff + 1);
  let tail = 0;
  for (let n = cutoff + 1; term > 0; n++) {
    tail += term;
    const ratio = intensity / (n + 1);
    if (ratio < 0.5 && term * 2 < tail * UNIT_ROUNDOFF) {
      tail += 2 * term;
      break;
    }
    term *= ratio;
  }
  // Each weight carries at most 2n + 2 roundings (exp, then one product and one quotient per step).
  return { weights, tail: tail * (1 + (4 * cutoff + 64) * UNIT_ROUNDOFF) };
}

/** One observed row: Σ_n p_n(μ)·x_n lies in [value − tail, value] (the unseen tail lies in [0, tail]). */
export interface ObservedRow {
  intensity: number;
  value: number;
}

/** The LP min/max x_target over x ∈ [0,1]^{cutoff+1} subject to the observed rows, as plain arrays. */
export interface PhotonLp {
  cutoff: number;
  target: number;
  sense: 'min' | 'max';
  /** Row-scaled coefficients, lower and upper bounds (every row has both bounds finite). */
  rows: { intensity: number; coefficients: number[]; lower: number; upper: number }[];
  /** Largest number of roundings in any coefficient or bound (enters the margin). */
  coefficientRoundings: number;
}

export function photonLp(observed: readonly ObservedRow[], cutoff: number, target: number, sense: 'min' | 'max'): PhotonLp {
  const rows = observed.map(({ intensity, value }) => {
    const { weights, tail } = poissonWeights(intensity, cutoff);
    // Rows are scaled to order one so HiGHS's absolute tolerances mean the same at 0 km and at 150 km.
    const scale = Math.max(value, tail, Number.MIN_VALUE);
    return {
      intensity,
      coefficients: weights.map((w) => w / scale),
      lower: Math.max(0, value - tail) / scale,
      upper: value / scale,
    };
  });
  return { cutoff, target, sense, rows, coefficientRoundings: 2 * cutoff + 8 };
}

/** A bound with the dual certificate that proves it. */
export interface CertifiedLpBound {
  /** The bound claimed: for min the dual objective minus the margin, for max the negated counterpart. */
  certifiedValue: number;
  /** HiGHS's primal optimum (not trusted; reported so the gap to the certificate is visible). */
  primalValue: number;
  /** Row multipliers y (one per observed row, scaled rows) taken from HiGHS and re-checked here. */
  rowDuals: number[];
  /** Σ_i y_i·b_i + Σ_n min(0, r_n) with r = c − Aᵀy, computed here. */
  dualObjective: number;
  /** Floating-point margin subtracted from the dual objective (min form). */
  margin: number;
  status: 'CERTIFIED' | 'INFEASIBLE';
  message?: string;
}

function formatNumber(x: number): string {
  return x.toPrecision(17);
}

/** The LP in CPLEX LP text, the form HiGHS's one-shot interface reads. */
export function lpText(lp: PhotonLp): string {
  const lines = [lp.sense === 'min' ? 'Minimize' : 'Maximize', ` obj: x${lp.target}`, 'Subject To'];
  lp.rows.forEach((row, i) => {
    const terms = row.coefficients.map((a, n) => `${n === 0 ? '' : '+ '}${formatNumber(a)} x${n}`).join(' ');
    lines.push(` lo${i}: ${terms} >= ${formatNumber(row.lower)}`);
    lines.push(` up${i}: ${terms} <= ${formatNumber(row.upper)}`);
  });
  lines.push('Bounds');
  for (let n = 0; n <= lp.cutoff; n++) lines.push(` 0 <= x${n} <= 1`);
  lines.push('End');
  return lines.join('\n');
}

/**
 * Weak duality for min c·x over ℓ ≤ Ax ≤ u, 0 ≤ x ≤ 1: for every y, c·x ≥ Σ_i y_i b_i + Σ_n min(0, r_n) with
 * b_i = ℓ_i when y_i ≥ 0 and u_i otherwise, r = c − Aᵀy (every row has both bounds, so every y is dual feasible;
 * the box absorbs the reduced costs). Rounding in this sum, in the coefficients and in the bounds is covered by
 * margin = 2(m + n + k + 4)·u·S, S the sum of absolute values of all terms (u = 2⁻⁵³, k coefficient roundings).
 */
export function weakDualityBound(lp: PhotonLp, rowDuals: readonly number[]): { dualObjective: number; margin: number } {
  const sign = lp.sense === 'min' ? 1 : -1;
  const n = lp.cutoff + 1;
  let dualObjective = 0;
  let absolute = 0;
  lp.rows.forEach((row, i) => {
    const b = rowDuals[i] >= 0 ? row.lower : row.upper;
    dualObjective += rowDuals[i] * b;
    absolute += Math.abs(rowDuals[i] * b);
  });
  for (let j = 0; j < n; j++) {
    let reduced = j === lp.target ? sign : 0;
    absolute += Math.abs(reduced);
    lp.rows.forEach((row, i) => {
      reduced -= row.coefficients[j] * rowDuals[i];
      absolute += Math.abs(row.coefficients[j] * rowDuals[i]);
    });
    dualObjective += Math.min(0, reduced);
  }
  const margin = 2 * (lp.rows.length + n + lp.coefficientRoundings + 4) * UNIT_ROUNDOFF * absolute;
  return { dualObjective, margin };
}

/** Solves the LP with HiGHS and certifies the optimum from the row duals (the primal value alone is never used). */
export function certifiedLpBound(highs: Highs, lp: PhotonLp): CertifiedLpBound {
  const solution = highs.solve(lpText(lp), {
    primal_feasibility_tolerance: 1e-10,
    dual_feasibility_tolerance: 1e-10,
    output_flag: false,
  } as Parameters<Highs['solve']>[1]);
  if (solution.Status !== 'Optimal') {
    return {
      status: 'INFEASIBLE',
      message: `the LP solver reports ${solution.Status}: no photon-number yields reproduce the observed gains`,
      certifiedValue: Number.NaN,
      primalValue: Number.NaN,
      rowDuals: [],
      dualObjective: Number.NaN,
      margin: Number.NaN,
    };
  }
  const sign = lp.sense === 'min' ? 1 : -1;
  // HiGHS gives one dual per text row (lo_i, up_i); both belong to the same scaled row, so they add up. Its
  // maximisation duals are for max c·x, negated here to match min(−c·x).
  const dual = (k: number) => ('Dual' in solution.Rows[k] ? (solution.Rows[k] as { Dual: number }).Dual : 0);
  const rowDuals = lp.rows.map((_, i) => sign * (dual(2 * i) + dual(2 * i + 1)));
  const { dualObjective, margin } = weakDualityBound(lp, rowDuals);
  return {
    status: 'CERTIFIED',
    certifiedValue: sign * (dualObjective - margin),
    primalValue: solution.ObjectiveValue,
    rowDuals,
    dualObjective: sign * dualObjective,
    margin,
  };
}

/** e₁ ≤ (e₁Y₁)ᵁ / Y₁ᴸ, rounded upward (the quotient's rounding is covered by the factor 1 + 4u), capped at 1. */
export function errorRateUpper(errorYieldUpper: number, yieldLower: number): number {
  return yieldLower > 0 ? Math.min(1, (errorYieldUpper / yieldLower) * (1 + 4 * UNIT_ROUNDOFF)) : 1;
}
