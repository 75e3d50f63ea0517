// Score ascent for a fixed α and the one-dimensional search over α (docs/finite-size.md, "Optimisation").
// The ascent need not be certified (any f gives a valid key length); every value it compares is the solver's
// certified lower bound, so the point finally kept carries a certificate.
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import type { Problem } from '../problem/model.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import type { SolveResult } from '../result/types.js';
import { resultWithoutBound } from '../frank-wolfe/finish.js';
import { RunClock } from '../frank-wolfe/state.js';
import { acceptanceWindow, type AcceptanceWindow } from './acceptance-window.js';
import { singleRoundValue, tiltedBranchWeights, scoredProblem, type FiniteSizeEntropy, type SingleRoundSolver, type SingleRoundValue } from './single-round.js';

/** Smallest α − 1 searched: below it the sandwiched objective's 1/(α−1) amplifies rounding beyond the gap. */
export const MIN_ALPHA_EXCESS = 1e-4;
const MAX_ASCENT_STEPS = 30;
/** Single-round solves one ascent may spend (the speed target; near α = 1 later steps gain little, §9). */
const MAX_ASCENT_SOLVES = 24;
const MAX_STEP_TRIALS = 5;
/** Iterations of a trial point's first solve: its upper bound already rejects most losing steps. */
const TRIAL_ITERATIONS = 8;
/** Largest change of one score in a first trial (bits): a trust region where the local curvature model is poor. */
const MAX_SCORE_STEP = 4;
/** Step of the α walk in log10(α − 1). */
const WALK_STEP = 0.5;
/** Supergradients added at one point when its line searches fail (kinks of h^f_α, docs/finite-size.md). */
const MAX_BUNDLE_STEPS = 2;

export interface SearchContext {
  problem: Problem;
  kind: FiniteSizeEntropy;
  rounds: number;
  epsilonCompleteness: number;
  /** Honest branch probabilities. */
  honest: number[];
  /** Every α-dependent and constant cost in bits (λ_EC, verification, privacy amplification, −2) for the rate. */
  fixedCost: (alpha: number) => number;
  /** The ascents' solves: their final states give the supergradients every step follows. */
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

/** What one ascent may spend: single-round solves, and supergradients added at one point (0: plain BFGS). */
export interface AscentBudget {
  solves: number;
  bundles: number;
}

const FULL_ASCENT: AscentBudget = { solves: MAX_ASCENT_SOLVES, bundles: MAX_BUNDLE_STEPS };
/**
 * Every further α continues the nearest α's ascent without bundle steps: comparing α at borrowed scores alone lost
 * up to 40 % of the rate at n = 1e6 (0.034 against 0.056, docs/finite-size.md §5).
 */
const CONTINUED_ASCENT: AscentBudget = { solves: MAX_ASCENT_SOLVES, bundles: 0 };

async function evaluate(
  context: SearchContext,
  state: SearchState,
  alpha: number,
  scores: number[],
  warmStart: ComplexMatrix | undefined,
  settings: Partial<SolverSettings> = context.settings,
): Promise<ScorePoint> {
  state.solves++;
  let single: SingleRoundValue;
  try {
    single = await singleRoundValue(context.problem, context.kind, alpha, scores, settings, context.solver, warmStart, false);
  } catch (error) {
    // Some inputs make the solver's step-length eigenvalue overflow (a solver defect, reported): this point then
    // has no certified value, and the search goes on without it.
    if (!(error instanceof RangeError)) throw error;
    single = { alpha, scores: [...scores], bound: null, result: numericalError(context, alpha, error), tiltedWeights: [] };
  }
  return pointOf(context, single);
}

/**
 * A certified single-round value as a point of this context's n: only the acceptance window depends on n, so a
 * value solved for another n (a sweep's previous optimum) needs no new solve.
 */
export function pointOf(context: SearchContext, single: SingleRoundValue): ScorePoint {
  const window = acceptanceWindow(context.honest, single.scores, context.rounds, context.epsilonCompleteness);
  const value = single.bound === null ? -Infinity : single.bound + window.minimumScoreSum / context.rounds;
  return { alpha: single.alpha, scores: single.scores, single, window, value };
}

/**
 * The search's best point solved once more with `settings` (a larger iteration cap), warm-started where it stopped;
 * the higher of the two certified values is kept.
 */
export async function finalSolve(context: SearchContext, state: SearchState, point: ScorePoint, settings: Partial<SolverSettings>): Promise<ScorePoint> {
  const again = await evaluate(context, state, point.alpha, point.scores, point.single.finalState, settings);
  return again.value > point.value ? again : point;
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
  const full = await evaluate(context, state, alpha, scores, quick.single.finalState ?? warmStart);
  // When the longer solve fails (see numericalError), the short solve's certified bound still stands.
  return full.single.result.status === 'NUMERICAL_ERROR' ? quick : full;
}

/** The point solved to the full settings (warm-started where it stopped), unless it already was. */
async function settled(context: SearchContext, state: SearchState, point: ScorePoint): Promise<ScorePoint> {
  if (point.single.result.status === 'CERTIFIED' || point.single.result.iterations >= (context.settings.maxIterations ?? 0)) return point;
  const full = await evaluate(context, state, point.alpha, point.scores, point.single.finalState);
  return full.single.result.status === 'NUMERICAL_ERROR' ? point : full;
}

/** The result recorded for a solve that threw: no bound, no certificate, the error's message. */
function numericalError(context: SearchContext, alpha: number, error: Error): SolveResult {
  const base = { entropy: context.kind, alpha, inputHash: '' };
  return resultWithoutBound(base, new RunClock(0, undefined), `single-round solve failed: ${error.message}`, 0);
}

/** H·v for the row-major m×m matrix H. */
function multiply(matrix: Float64Array, vector: readonly number[]): number[] {
  const m = vector.length;
  return Array.from({ length: m }, (_, i) => vector.reduce((acc, v, j) => acc + matrix[i * m + j] * v, 0));
}

/** The point of the segment [a, b] of least H-norm: argmin over λ ∈ [0, 1] of ‖b + λ(a − b)‖_H. */
function leastNormCombination(a: readonly number[], b: readonly number[], metric: Float64Array): number[] {
  const difference = a.map((x, c) => x - b[c]);
  const hd = multiply(metric, difference);
  const curvature = difference.reduce((acc, x, c) => acc + x * hd[c], 0);
  const lambda = curvature > 0 ? Math.min(1, Math.max(0, -b.reduce((acc, x, c) => acc + x * hd[c], 0) / curvature)) : 0;
  return b.map((x, c) => x + lambda * difference[c]);
}

/** ∂(value)/∂f = r − q: tilted honest distribution of the window minus tilted branch weights at the optimal state. */
function supergradient(context: SearchContext, point: ScorePoint): number[] | null {
  const state = point.single.finalState;
  if (!state) return null;
  let q: number[];
  try {
    q = tiltedBranchWeights(scoredProblem(context.problem, point.scores), { kind: context.kind, alpha: point.alpha }, state);
  } catch (error) {
    // A final state outside the positive cone (seen after iteration limits, reported) gives no supergradient.
    if (error instanceof RangeError) return null;
    throw error;
  }
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
  budget: AscentBudget = FULL_ASCENT,
): Promise<ScorePoint> {
  const m = initialScores.length;
  const kappa = (alpha - 1) / alpha;
  // Inverse curvature of −G (row-major m×m).
  let inverse = new Float64Array(m * m);
  for (let c = 0; c < m; c++) inverse[c * m + c] = 1 / (Math.max(context.honest[c], 1e-6) * kappa * Math.LN2);
  let current = await evaluate(context, state, alpha, initialScores, warmStart);
  let gradient = supergradient(context, current);
  const firstSolve = state.solves;
  const withinBudget = () => state.solves - firstSolve < budget.solves;
  for (let iteration = 0; iteration < MAX_ASCENT_STEPS && gradient !== null && withinBudget(); iteration++) {
    if (Math.max(...gradient.map(Math.abs)) < 1e-10) break;
    let accepted: ScorePoint | null = null;
    let direction: number[] = [];
    let step = 1;
    // A kink (several optimal states, each with its own supergradient) blocks the direction of one of them; each
    // failed line search adds the supergradient at its nearest trial point and retries along the least-norm
    // element of their hull (a two-element bundle step).
    for (let bundle = 0; accepted === null && bundle <= budget.bundles && withinBudget(); bundle++) {
      direction = multiply(inverse, gradient);
      const slope = direction.reduce((acc, d, c) => acc + d * (gradient as number[])[c], 0);
      if (!(slope > 0)) break;
      step = Math.min(1, MAX_SCORE_STEP / Math.max(...direction.map(Math.abs)));
      let nearest: ScorePoint | null = null;
      for (let trial = 0; trial < MAX_STEP_TRIALS && withinBudget(); trial++, step /= 4) {
        const scores = current.scores.map((f, c) => f + step * direction[c]);
        const threshold = current.value + 1e-4 * step * slope;
        const candidate = await evaluateTrial(context, state, alpha, scores, current.single.finalState, threshold);
        if (candidate.value > threshold) {
          accepted = candidate;
          break;
        }
        nearest = candidate;
      }
      // The nearest trial's state after a full solve: a short solve barely leaves the state it started from.
      const probe = accepted === null && nearest !== null && withinBudget() ? await settled(context, state, nearest) : null;
      const other = probe === null ? null : supergradient(context, probe);
      if (other === null) break;
      gradient = leastNormCombination(gradient, other, inverse);
    }
    if (accepted === null) break;
    const improvement = accepted.value - current.value;
    const nextGradient = supergradient(context, accepted);
    const previous = gradient;
    // BFGS update of the inverse curvature of −G: s = step·d, y = −(∇G_new − ∇G_old).
    const sVector = direction.map((d) => step * d);
    const yVector = nextGradient?.map((g, c) => previous[c] - g) ?? [];
    const sy = sVector.reduce((acc, x, c) => acc + x * (yVector[c] ?? 0), 0);
    if (nextGradient !== null && sy > 1e-12) {
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
 * inside the bracket. The first α's scores are ascended with bundle steps; every other α continues the ascent from the
 * scores and state of the nearest α already solved, and the best α, when it is not the first, is ascended last.
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
    const budget = solved.size === 0 ? FULL_ASCENT : CONTINUED_ASCENT;
    const point = await ascendScores(context, state, 1 + 10 ** key, nearest?.scores ?? initialScores, nearest?.single.finalState, budget);
    solved.set(key, point);
    return point;
  };
  const score = (p: ScorePoint) => rate(context, p);
  let x = clamp(Math.log10(2 / Math.sqrt(context.rounds)));
  const ascended = await at(x);
  let best = ascended;
  // Walk uphill: try both neighbours first, then keep going the better way.
  const up = await at(clamp(x + WALK_STEP));
  const direction = score(up) > score(best) ? WALK_STEP : -WALK_STEP;
  if (direction > 0) {
    best = up;
    x = clamp(x + WALK_STEP);
  }
  for (;;) {
    const next = clamp(x + direction);
    if (next === x) break;
    const point = await at(next);
    if (score(point) <= score(best)) break;
    best = point;
    x = next;
  }
  // Golden section on [x − step, x + step] ∩ range.
  let a = clamp(x - WALK_STEP);
  let b = clamp(x + WALK_STEP);
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
  if (best === ascended) return best;
  // The ascent re-solves its start (warm, yet possibly to a looser bound within the cap): the better is kept.
  const last = await ascendScores(context, state, best.alpha, best.scores, best.single.finalState);
  return last.value > best.value ? last : best;
}
