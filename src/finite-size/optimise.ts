// Score ascent for a fixed α and the one-dimensional search over α (docs/finite-size.md, "Optimisation").
// The ascent need not be certified (any f gives a valid key length); every value it compares is the solver's
// certified lower bound, so the point finally kept carries a certificate.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { Problem } from '../problem/model.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { acceptanceWindow, type AcceptanceWindow } from './acceptance-window.js';
import { singleRoundValue, tiltedBranchWeights, scoredProblem, type FiniteSizeEntropy, type SingleRoundSolver, type SingleRoundValue } from './single-round.js';

/** Smallest α − 1 searched: below it the sandwiched objective's 1/(α−1) amplifies rounding beyond the gap. */
export const MIN_ALPHA_EXCESS = 1e-4;
const MAX_ASCENT_STEPS = 30;
const MAX_STEP_TRIALS = 5;
/** Iterations of a trial point's first solve: its upper bound already rejects most losing steps. */
const TRIAL_ITERATIONS = 8;

export interface SearchContext {
  problem: Problem;
  kind: FiniteSizeEntropy;
  rounds: number;
  epsilonCompleteness: number;
  /** Honest branch probabilities. */
  honest: number[];
  /** Every α-dependent and constant cost in bits (λ_EC, verification, privacy amplification, −2) for the rate. */
  fixedCost: (alpha: number) => number;
  settings: Partial<SolverSettings>;
  solver: SingleRoundSolver;
  onProgress?: (progress: SearchProgress) => void;
}

export interface SearchProgress {
  alpha: number;
  ratePerRound: number;
  singleRoundSolves: number;
}

/** One certified point (α, f) with its per-round objective h + (nμ − t)/n. */
export interface ScorePoint {
  alpha: number;
  scores: number[];
  single: SingleRoundValue;
  window: AcceptanceWindow;
  /** h^f_α + (nμ − t)/n: bits per round before the fixed costs; −Infinity without a certified bound. */
  value: number;
}

export interface SearchState {
  /** Single-round solves so far. */
  solves: number;
}

async function evaluate(
  context: SearchContext,
  state: SearchState,
  alpha: number,
  scores: number[],
  warmStart: ComplexMatrix | undefined,
  settings: Partial<SolverSettings> = context.settings,
): Promise<ScorePoint> {
  state.solves++;
  const single = await singleRoundValue(context.problem, context.kind, alpha, scores, settings, context.solver, warmStart, false);
  const window = acceptanceWindow(context.honest, scores, context.rounds, context.epsilonCompleteness);
  const value = single.bound === null ? -Infinity : single.bound + window.minimumScoreSum / context.rounds;
  return { alpha, scores, single, window, value };
}

/**
 * A trial point of the ascent, which is kept only if its certified value exceeds `threshold`: a short solve first,
 * whose upper bound (F at a feasible state bounds h^f_α from above) rejects a losing step for certain; only an
 * undecided trial is solved to the full settings, warm-started where the short solve ended.
 */
async function evaluateTrial(
  context: SearchContext,
  state: SearchState,
  alpha: number,
  scores: number[],
  warmStart: ComplexMatrix | undefined,
  threshold: number,
): Promise<ScorePoint> {
  const cap = context.settings.maxIterations;
  if (cap === undefined || cap <= TRIAL_ITERATIONS) return evaluate(context, state, alpha, scores, warmStart);
  const quick = await evaluate(context, state, alpha, scores, warmStart, { ...context.settings, maxIterations: TRIAL_ITERATIONS });
  const upper = quick.single.result.upperBound;
  if (quick.single.result.status === 'CERTIFIED') return quick;
  if (upper !== null && upper + quick.window.minimumScoreSum / context.rounds <= threshold) return quick;
  return evaluate(context, state, alpha, scores, quick.single.finalState ?? warmStart);
}

/** ∂(value)/∂f = r − q: tilted honest distribution of the window minus tilted branch weights at the optimal state. */
function supergradient(context: SearchContext, point: ScorePoint): number[] {
  const state = point.single.finalState;
  if (!state) return point.scores.map(() => 0);
  const q = tiltedBranchWeights(scoredProblem(context.problem, point.scores), { kind: context.kind, alpha: point.alpha }, state);
  return q.map((qc, c) => context.honest[c] - point.window.deviationGradient[c] / context.rounds - qc);
}

/**
 * Maximises h^f_α + min_Ω(Σf)/n over f for a fixed α with BFGS on the supergradient (a few branches, a smooth
 * concave objective away from degenerate optima): the inverse curvature starts at the diagonal 1/(p_c·κ·ln 2)
 * (h^f_α curves like κ·ln2·p_c in f(c)), steps are backtracked (Armijo, quartering), and the search stops when a
 * step gains less than 1e-4 of the value.
 */
export async function ascendScores(
  context: SearchContext,
  state: SearchState,
  alpha: number,
  initialScores: number[],
  warmStart?: ComplexMatrix,
): Promise<ScorePoint> {
  const m = initialScores.length;
  const kappa = (alpha - 1) / alpha;
  // Inverse curvature of −G (row-major m×m).
  let inverse = new Float64Array(m * m);
  for (let c = 0; c < m; c++) inverse[c * m + c] = 1 / (Math.max(context.honest[c], 1e-6) * kappa * Math.LN2);
  let current = await evaluate(context, state, alpha, initialScores, warmStart);
  let gradient = supergradient(context, current);
  for (let iteration = 0; iteration < MAX_ASCENT_STEPS; iteration++) {
    if (Math.max(...gradient.map(Math.abs)) < 1e-10) break;
    // Ascent direction d = H·∇G.
    const direction = Array.from({ length: m }, (_, i) => gradient.reduce((acc, g, j) => acc + inverse[i * m + j] * g, 0));
    const slope = direction.reduce((acc, d, c) => acc + d * gradient[c], 0);
    if (!(slope > 0)) break;
    let accepted: ScorePoint | null = null;
    let step = 1;
    for (let trial = 0; trial < MAX_STEP_TRIALS; trial++, step /= 4) {
      const scores = current.scores.map((f, c) => f + step * direction[c]);
      const threshold = current.value + 1e-4 * step * slope;
      const candidate = await evaluateTrial(context, state, alpha, scores, current.single.finalState, threshold);
      if (candidate.value > threshold) {
        accepted = candidate;
        break;
      }
    }
    if (accepted === null) break;
    const improvement = accepted.value - current.value;
    const nextGradient = supergradient(context, accepted);
    // BFGS update of the inverse curvature of −G: s = step·d, y = −(∇G_new − ∇G_old).
    const sVector = direction.map((d) => step * d);
    const yVector = nextGradient.map((g, c) => gradient[c] - g);
    const sy = sVector.reduce((acc, x, c) => acc + x * yVector[c], 0);
    if (sy > 1e-12) {
      const rho = 1 / sy;
      const hy = Array.from({ length: m }, (_, i) => yVector.reduce((acc, y, j) => acc + inverse[i * m + j] * y, 0));
      const yhy = yVector.reduce((acc, y, c) => acc + y * hy[c], 0);
      const updated = new Float64Array(m * m);
      for (let i = 0; i < m; i++) {
        for (let j = 0; j < m; j++) {
          updated[i * m + j] =
            inverse[i * m + j] - rho * (hy[i] * sVector[j] + sVector[i] * hy[j]) + (rho * rho * yhy + rho) * sVector[i] * sVector[j];
        }
      }
      inverse = updated;
    }
    current = accepted;
    gradient = nextGradient;
    if (improvement < 1e-4 * Math.abs(current.value) + 1e-9) break;
  }
  context.onProgress?.({ alpha, ratePerRound: rate(context, current), singleRoundSolves: state.solves });
  return current;
}

/** The key rate per round of a point: its value minus the fixed costs over n. */
export function rate(context: SearchContext, point: ScorePoint): number {
  return point.value - context.fixedCost(point.alpha) / context.rounds;
}

/**
 * Maximises the rate over α ∈ [1 + 1e−4, 2] in x = log10(α − 1): start near α − 1 ≈ 2/√n (the optimum shrinks
 * like 1/√n, docs/finite-size.md), walk uphill in steps of 0.5 until the rate falls, then golden-section search
 * inside the bracket. Each α's ascent starts from the scores and state of the nearest α already solved.
 */
export async function searchAlpha(context: SearchContext, state: SearchState, initialScores: number[]): Promise<ScorePoint> {
  const lowest = Math.log10(MIN_ALPHA_EXCESS);
  const clamp = (x: number) => Math.min(0, Math.max(lowest, x));
  const solved = new Map<number, ScorePoint>();
  const at = async (x: number): Promise<ScorePoint> => {
    const key = Math.round(x * 1e9) / 1e9;
    const known = solved.get(key);
    if (known) return known;
    let nearest: ScorePoint | undefined;
    let distance = Infinity;
    for (const [k, p] of solved) {
      if (Math.abs(k - key) < distance && Number.isFinite(p.value)) {
        distance = Math.abs(k - key);
        nearest = p;
      }
    }
    const point = await ascendScores(context, state, 1 + 10 ** key, nearest?.scores ?? initialScores, nearest?.single.finalState);
    solved.set(key, point);
    return point;
  };
  const score = (p: ScorePoint) => rate(context, p);
  let x = clamp(Math.log10(2 / Math.sqrt(context.rounds)));
  let best = await at(x);
  // Walk uphill: try both neighbours first, then keep going the better way.
  const up = await at(clamp(x + 0.5));
  const direction = score(up) > score(best) ? 0.5 : -0.5;
  if (direction > 0) {
    best = up;
    x = clamp(x + 0.5);
  }
  for (;;) {
    const next = clamp(x + direction);
    if (next === x) break;
    const point = await at(next);
    if (score(point) <= score(best)) break;
    best = point;
    x = next;
  }
  // Golden section on [x − 0.5, x + 0.5] ∩ range.
  let a = clamp(x - 0.5);
  let b = clamp(x + 0.5);
  const ratio = (Math.sqrt(5) - 1) / 2;
  let c = b - ratio * (b - a);
  let d = a + ratio * (b - a);
  let pc = await at(c);
  let pd = await at(d);
  while (b - a > 0.1) {
    if (score(pc) >= score(pd)) {
      b = d;
      d = c;
      pd = pc;
      c = b - ratio * (b - a);
      pc = await at(c);
    } else {
      a = c;
      c = d;
      pc = pd;
      d = a + ratio * (b - a);
      pd = await at(d);
    }
  }
  for (const p of solved.values()) if (score(p) > score(best)) best = p;
  return best;
}
