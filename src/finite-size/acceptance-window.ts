// The acceptance window Ω = {cⁿ : Σ_j f(c_j) ≥ n·μ − t} on the observed score sum, μ = Σ_c p_c f(c) the honest
// mean. t is the Cramér–Chernoff deviation: for i.i.d. honest rounds Pr[Σ f ≤ nμ − t] ≤ exp(nΛ(s) − s·t) for every
// s > 0, with Λ(s) = ln Σ_c p_c e^{−s(f(c) − μ)}, so t = inf_s (nΛ(s) + ln(1/ε_com))/s makes the honest abort
// probability at most ε_com (docs/finite-size.md, "Acceptance window").

export interface AcceptanceWindow {
  /** Honest mean score per round μ. */
  meanScore: number;
  /** Deviation t allowed below n·μ. */
  deviation: number;
  /** min over Ω of Σ_j f(c_j) = n·μ − t. */
  minimumScoreSum: number;
  /** The optimal Chernoff parameter s* (Infinity when the window is the whole support). */
  chernoffParameter: number;
  /** ∂t/∂f(c) = n·(p_c − r_c), r the honest distribution tilted by e^{−s* f} (envelope theorem). */
  deviationGradient: number[];
}

/**
 * ln Σ_c p_c e^{−s(f_c − μ)} and the tilted distribution r: log1p/expm1 while the exponents are small (n·Λ must
 * stay accurate for n up to 1e12, where Λ is of order 1e−12), log-sum-exp otherwise.
 */
function cumulant(p: readonly number[], f: readonly number[], mu: number, s: number): { value: number; tilted: number[] } {
  const small = p.every((pc, c) => pc === 0 || Math.abs(s * (f[c] - mu)) < 0.5);
  if (small) {
    const weights = p.map((pc, c) => (pc > 0 ? pc * Math.exp(-s * (f[c] - mu)) : 0));
    const total = weights.reduce((a, b) => a + b, 0);
    const value = Math.log1p(p.reduce((acc, pc, c) => acc + (pc > 0 ? pc * Math.expm1(-s * (f[c] - mu)) : 0), 0));
    return { value, tilted: weights.map((w) => w / total) };
  }
  let largest = -Infinity;
  const exponents = p.map((pc, c) => (pc > 0 ? Math.log(pc) - s * (f[c] - mu) : -Infinity));
  for (const e of exponents) largest = Math.max(largest, e);
  const terms = exponents.map((e) => Math.exp(e - largest));
  const total = terms.reduce((a, b) => a + b, 0);
  return { value: largest + Math.log(total), tilted: terms.map((x) => x / total) };
}

/**
 * The window for n rounds at completeness ε_com. φ(s) = (nΛ(s) + L)/s has φ' = N(s)/s² with N(s) = n(sΛ' − Λ) − L
 * increasing (its derivative is n·s·Λ'' ≥ 0), so φ is unimodal and its minimiser is the root of N (bisection on ln s).
 */
export function acceptanceWindow(
  probabilities: readonly number[],
  scores: readonly number[],
  rounds: number,
  epsilonCompleteness: number,
): AcceptanceWindow {
  const mu = probabilities.reduce((acc, p, c) => acc + p * scores[c], 0);
  const L = Math.log(1 / epsilonCompleteness);
  const support = probabilities.map((_, c) => c).filter((c) => probabilities[c] > 0);
  const lowest = Math.min(...support.map((c) => scores[c]));
  const phi = (s: number) => (rounds * cumulant(probabilities, scores, mu, s).value + L) / s;
  // N(s) through φ: N(s) = −s²φ'(s) sign-wise; use the closed form sΛ' − Λ with Λ' = Σ r_c(μ − f_c).
  const numerator = (s: number) => {
    const { value, tilted } = cumulant(probabilities, scores, mu, s);
    const derivative = tilted.reduce((acc, r, c) => acc + r * (mu - scores[c]), 0);
    return rounds * (s * derivative - value) - L;
  };
  const spread = Math.max(...support.map((c) => Math.abs(scores[c] - mu)));
  const whole = (): AcceptanceWindow => ({
    meanScore: mu,
    deviation: rounds * (mu - lowest),
    minimumScoreSum: rounds * lowest,
    chernoffParameter: Infinity,
    deviationGradient: probabilities.map((p, c) => rounds * (p - (scores[c] === lowest && p > 0 ? 1 / support.filter((k) => scores[k] === lowest).length : 0))),
  });
  if (spread === 0) return { ...whole(), deviation: 0, minimumScoreSum: rounds * mu, deviationGradient: probabilities.map(() => 0) };
  // Bracket the root of N in ln s: N(0+) = −L < 0; search upwards until N > 0 (or the whole support wins).
  let low = Math.log(1e-12 / spread);
  let high = low;
  while (numerator(Math.exp(high)) < 0) {
    high += 2;
    if (high > Math.log(1e6 / spread)) return whole();
  }
  for (let k = 0; k < 200 && high - low > 1e-12; k++) {
    const mid = (low + high) / 2;
    if (numerator(Math.exp(mid)) < 0) low = mid;
    else high = mid;
  }
  const s = Math.exp(high);
  const deviation = Math.min(phi(s), rounds * (mu - lowest));
  const { tilted } = cumulant(probabilities, scores, mu, s);
  return {
    meanScore: mu,
    deviation,
    minimumScoreSum: rounds * mu - deviation,
    chernoffParameter: s,
    deviationGradient: probabilities.map((p, c) => rounds * (p - tilted[c])),
  };
}
