// The finite-size key length under coherent attacks: options, ε split, α and score optimisation, the ledger,
// the asymptotic (Devetak–Winter) reference and the min-tradeoff export (docs/finite-size.md).
import type { MinTradeoffFunction, SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import { ValidationError } from '../problem/errors.js';
import type { Problem } from '../problem/model.js';
import { keyLengthLedger, privacyAmplificationBits, errorVerificationBits, variableLengthIntercept, type EpsilonSplit, type LedgerTerm } from './ledger.js';
import { MIN_ALPHA_EXCESS, ascendScores, finalSolve, pointOf, rate, searchAlpha, type ScorePoint, type SearchContext, type SearchProgress, type SearchState } from './optimise.js';
import { verifyResult } from '../certificate/verify.js';
import { localSolver, problemToJson, scoredProblem, type FiniteSizeEntropy, type SingleRoundSolver } from './single-round.js';
import type { ProblemJson } from '../problem/json.js';
import { sourceMarginalConstraints } from '../problem/validate.js';
import { minTradeoffOf } from './min-tradeoff.js';
import { branchOperators, leastVarianceScores } from './score-equivalence.js';

/** Defaults: common practice values (ε_sec 1e−10, ε_com 1e−2, f_EC 1.16). */
export const KEY_LENGTH_DEFAULTS = Object.freeze({
  epsilonSecrecy: 1e-10,
  epsilonCompleteness: 1e-2,
  ecEfficiency: 1.16,
  entropy: 'sandwiched-up' as FiniteSizeEntropy,
  gapTolerance: 1e-6,
  /** Iteration cap of each single-round solve: near α = 1 a few solves stall at a gap the key length cannot see. */
  maxIterations: 40,
  /**
   * Iteration cap of the final solve of the chosen (α, f), the one with rank-manifold steps (the search's solves
   * skip them, docs/finite-size.md §5); a cap other than the search's also gives it its own input hash, so a
   * cache never answers it with the search's solve of the same point.
   */
  finalMaxIterations: 60,
});

export interface KeyLengthOptions {
  rounds: number;
  epsilonSecrecy?: number;
  epsilonCompleteness?: number;
  /** Overrides of the default split ε_PA = ε_EV = ε_sec/2; when only one is given the other is ε_sec minus it. */
  epsilonPrivacyAmplification?: number;
  epsilonErrorVerification?: number;
  ecEfficiency?: number;
  /** λ_EC in bits, given directly instead of f_EC·n·Σ p_c H_c. */
  errorCorrectionBits?: number;
  /** A fixed Rényi order; optimised over (1, 2] when absent. */
  alpha?: number;
  variableLength?: boolean;
  /** sandwiched-up (default) or petz-up (the documented fast mode, a lower value). */
  entropy?: FiniteSizeEntropy;
  gapTolerance?: number;
  /** Scores the ascent starts from (default: the problem's branch scores); a sweep passes its neighbour's. */
  initialScores?: number[];
  /**
   * A point to compare with the search's best, its certified single-round result re-checked here: for fixed (α, f)
   * the rate does not decrease in n (docs/finite-size.md §5), so a sweep passes the previous n's optimum.
   */
  candidate?: KeyLengthCandidate;
  /** Skip the von Neumann reference solve (the sweep does it once per channel point). */
  withoutAsymptotic?: boolean;
  /** After each finished score ascent (one α). */
  onProgress?: (progress: SearchProgress) => void;
  /** After every single-round solve, with the phase of the search it belongs to. */
  onSolve?: (solved: SolveProgress) => void;
}

/** The search phases, in order: starting scores (von Neumann), the α search, the Devetak–Winter reference. */
export type SearchPhase = 'starting-scores' | 'alpha-search' | 'asymptotic-reference';

export interface SolveProgress {
  phase: SearchPhase;
  /** Rényi order of the solve, null for von Neumann. */
  alpha: number | null;
  result: SolveResult;
}

export interface VariableLengthRule {
  /** ℓ(F) = max(0, ⌊F + intercept⌋) for the observed score sum F = Σ_j f(c_j). */
  intercept: number;
  slope: 1;
  rule: string;
  /** ℓ at the honest expectation F = n·μ. */
  keyLengthAtHonestMean: number;
}

export interface KeyLengthReport {
  keyLength: number;
  ratePerRound: number;
  rounds: number;
  alpha: number;
  entropy: FiniteSizeEntropy;
  scores: Record<string, number>;
  singleRoundBound: SolveResult;
  /** The problem singleRoundBound answers (scores set, statistics dropped): `verify` re-checks it against this. */
  singleRoundProblem: ProblemJson;
  terms: LedgerTerm[];
  epsilons: EpsilonSplit;
  acceptanceWindow: {
    meanScore: number;
    deviation: number;
    minimumScoreSum: number;
    honestAbortProbabilityAtMost: number;
    tail: string;
  };
  errorCorrection: { efficiency: number | null; bits: number };
  variableLength?: VariableLengthRule;
  asymptotic?: {
    /** Certified von Neumann bound with the problem's statistical constraints. */
    vonNeumannBound: number | null;
    /** Devetak–Winter rate: vonNeumannBound − λ_EC/n. */
    ratePerRound: number | null;
    minTradeoff: MinTradeoffFunction | null;
  };
  /** candidateKept: the point is options.candidate (a sweep's previous n), which beat this search. */
  search: { singleRoundSolves: number; seconds: number; candidateKept: boolean };
}

/** A point certified for this problem at another n (a sweep's previous optimum): its α, scores and single-round result. */
export interface KeyLengthCandidate {
  alpha: number;
  scores: number[];
  singleRoundBound: SolveResult;
}

function requireProbability(value: number, field: string): number {
  if (!Number.isFinite(value) || value <= 0 || value >= 1) throw new ValidationError(field, `must lie in (0, 1) (got ${value})`);
  return value;
}

/** The ε split: ε_PA + ε_EV = ε_sec by default (halves); overrides must keep the sum within ε_sec. */
export function splitEpsilons(options: KeyLengthOptions): EpsilonSplit {
  const secrecy = requireProbability(options.epsilonSecrecy ?? KEY_LENGTH_DEFAULTS.epsilonSecrecy, 'epsilon-secrecy');
  const completeness = requireProbability(options.epsilonCompleteness ?? KEY_LENGTH_DEFAULTS.epsilonCompleteness, 'epsilon-completeness');
  let pa = options.epsilonPrivacyAmplification;
  let ev = options.epsilonErrorVerification;
  if (pa === undefined && ev === undefined) pa = ev = secrecy / 2;
  else if (pa === undefined) pa = secrecy - requireProbability(ev as number, 'epsilon-error-verification');
  else if (ev === undefined) ev = secrecy - requireProbability(pa, 'epsilon-privacy-amplification');
  requireProbability(pa, 'epsilon-privacy-amplification');
  requireProbability(ev as number, 'epsilon-error-verification');
  if (pa + (ev as number) > secrecy * (1 + 1e-12)) {
    throw new ValidationError('epsilon-privacy-amplification', `ε_PA + ε_EV = ${pa + (ev as number)} exceeds ε_sec = ${secrecy}`);
  }
  return { secrecy, privacyAmplification: pa, errorVerification: ev as number, completeness };
}

/** Checks the problem and options that do not depend on the solver; throws ValidationError with the field. */
function checkedInputs(problem: Problem, options: KeyLengthOptions) {
  if (!Number.isFinite(options.rounds) || options.rounds < 1 || !Number.isInteger(options.rounds)) {
    throw new ValidationError('rounds', `must be a positive integer (got ${options.rounds})`);
  }
  const honest = problem.honestStatistics;
  if (!honest) {
    throw new ValidationError('honestStatistics', 'is required for a key length (build the problem with --test-probability)');
  }
  if (options.alpha !== undefined && (!Number.isFinite(options.alpha) || options.alpha <= 1 || options.alpha > 2)) {
    throw new ValidationError('alpha', `must lie in (1, 2] (got ${options.alpha})`);
  }
  const efficiency = options.ecEfficiency ?? KEY_LENGTH_DEFAULTS.ecEfficiency;
  if (!Number.isFinite(efficiency) || efficiency < 1) throw new ValidationError('ec-efficiency', `must be at least 1 (got ${efficiency})`);
  const entropy = options.entropy ?? KEY_LENGTH_DEFAULTS.entropy;
  if (entropy !== 'sandwiched-up' && entropy !== 'petz-up') {
    throw new ValidationError('entropy', `must be sandwiched-up or petz-up (got ${String(entropy)})`);
  }
  const shannon = honest.branchProbabilities.reduce((acc, p, c) => acc + p * honest.errorCorrectionEntropy[c], 0);
  const errorCorrectionBits = options.errorCorrectionBits ?? efficiency * options.rounds * shannon;
  if (!Number.isFinite(errorCorrectionBits) || errorCorrectionBits < 0) {
    throw new ValidationError('error-correction-bits', `must be a non-negative number (got ${errorCorrectionBits})`);
  }
  return { honest, efficiency: options.errorCorrectionBits === undefined ? efficiency : null, entropy, errorCorrectionBits };
}

/** The finite-size key length of `problem` for n = options.rounds rounds. */
export async function keyLength(
  problem: Problem,
  options: KeyLengthOptions,
  solver: SingleRoundSolver = localSolver,
): Promise<KeyLengthReport> {
  const started = performance.now();
  const epsilons = splitEpsilons(options);
  const { onSolve } = options;
  const inPhase = (phase: SearchPhase): SingleRoundSolver =>
    onSolve === undefined
      ? solver
      : async (p, request, s, warmStart) => {
          const result = await solver(p, request, s, warmStart);
          onSolve({ phase, alpha: request.alpha ?? null, result });
          return result;
        };
  const { honest, efficiency, entropy, errorCorrectionBits } = checkedInputs(problem, options);
  const settings: Partial<SolverSettings> = {
    gapTolerance: options.gapTolerance ?? KEY_LENGTH_DEFAULTS.gapTolerance,
    maxIterations: KEY_LENGTH_DEFAULTS.maxIterations,
  };
  // The chosen point is solved once more with a larger cap (docs/finite-size.md §5).
  const finalSettings: Partial<SolverSettings> = { ...settings, maxIterations: KEY_LENGTH_DEFAULTS.finalMaxIterations };
  const fixedCost = (alpha: number) =>
    errorCorrectionBits +
    errorVerificationBits(epsilons.errorVerification) +
    privacyAmplificationBits(alpha, epsilons.privacyAmplification) -
    2;
  const context: SearchContext = {
    problem,
    kind: entropy,
    rounds: options.rounds,
    epsilonCompleteness: epsilons.completeness,
    honest: honest.branchProbabilities,
    fixedCost,
    settings,
    solver: inPhase('alpha-search'),
    onProgress: options.onProgress,
  };
  const state: SearchState = { solves: 0 };
  const initialScores =
    options.initialScores ??
    (problem.branches.some((b) => b.score !== 0)
      ? problem.branches.map((b) => b.score)
      : await minTradeoffScores(problem, honest.branchProbabilities, inPhase('starting-scores'), settings));
  const searched =
    options.alpha === undefined
      ? await searchAlpha(context, state, initialScores)
      : await ascendScores(context, state, options.alpha, initialScores);
  const solved = await finalSolve(context, state, searched, finalSettings);
  const carried = options.candidate && carriedCandidate(problem, entropy, options.alpha, options.candidate, context);
  const best = carried && rate(context, carried) > rate(context, solved) ? carried : solved;
  if (best.single.bound === null) {
    throw new Error(`no certified single-round bound at α = ${best.alpha}: ${best.single.result.message ?? best.single.result.status}`);
  }
  const ledgerInput = {
    rounds: options.rounds,
    alpha: best.alpha,
    singleRoundBound: best.single.bound,
    errorCorrectionBits,
    epsilons,
  };
  const ledger = keyLengthLedger({ ...ledgerInput, scoreSum: best.window.minimumScoreSum });
  const report: KeyLengthReport = {
    keyLength: ledger.keyLength,
    ratePerRound: ledger.keyLength / options.rounds,
    rounds: options.rounds,
    alpha: best.alpha,
    entropy,
    scores: Object.fromEntries(problem.branches.map((b, c) => [b.label, best.scores[c]])),
    singleRoundBound: best.single.result,
    singleRoundProblem: problemToJson(scoredProblem(problem, best.scores)),
    terms: ledger.terms,
    epsilons,
    acceptanceWindow: {
      meanScore: best.window.meanScore,
      deviation: best.window.deviation,
      minimumScoreSum: best.window.minimumScoreSum,
      honestAbortProbabilityAtMost: epsilons.completeness,
      tail: 'Cramér–Chernoff bound for i.i.d. honest rounds: Pr[Σf ≤ nμ − t] ≤ exp(nΛ(s) − st), t = min_s (nΛ(s) + ln(1/ε_com))/s',
    },
    errorCorrection: { efficiency, bits: errorCorrectionBits },
    search: { singleRoundSolves: state.solves, seconds: 0, candidateKept: best === carried },
  };
  if (options.variableLength) {
    const intercept = variableLengthIntercept(ledgerInput);
    report.variableLength = {
      intercept,
      slope: 1,
      rule: 'keyLength = max(0, floor(observedScoreSum + intercept)), observedScoreSum = Σ_j f(c_j) with the scores above',
      keyLengthAtHonestMean: Math.max(0, Math.floor(options.rounds * best.window.meanScore + intercept)),
    };
  }
  if (!options.withoutAsymptotic) report.asymptotic = await asymptoticReference(problem, errorCorrectionBits / options.rounds, inPhase('asymptotic-reference'), settings);
  report.search.seconds = (performance.now() - started) / 1000;
  return report;
}

/**
 * The candidate as a point of this search (its window at this n; no solve), after `verifyResult` has re-checked its
 * certificate against the scored problem. Null when it answers another α than a fixed `--alpha`.
 */
function carriedCandidate(problem: Problem, kind: FiniteSizeEntropy, fixedAlpha: number | undefined, candidate: KeyLengthCandidate, context: SearchContext): ScorePoint | null {
  if (fixedAlpha !== undefined && candidate.alpha !== fixedAlpha) return null;
  if (candidate.scores.length !== problem.branches.length) {
    throw new ValidationError('candidate.scores', `must hold one score per branch (${problem.branches.length}, got ${candidate.scores.length})`);
  }
  const result = candidate.singleRoundBound;
  const check = verifyResult(scoredProblem(problem, candidate.scores), { kind, alpha: candidate.alpha }, result);
  if (!check.valid) throw new ValidationError('candidate.singleRoundBound', `does not verify: ${check.reason}`);
  const bound = result.status === 'CERTIFIED' || result.status === 'LIMIT_REACHED' ? result.certifiedLowerBound : null;
  return pointOf(context, { alpha: candidate.alpha, scores: [...candidate.scores], bound, result, tiltedWeights: [] });
}

/**
 * Starting scores from the von Neumann min-tradeoff function in the branch probabilities: solve H(S|CE) with
 * Tr(M_c ρ) = p_c for every branch (M_c = Σ_j K†K, the honest distribution) and the source marginal; the
 * certificate's g(q) = constant + Σ_c y_c q_c ≤ H(S|CE) makes f = y give h^f → constant as α → 1, with rate g(p)
 * at the honest point (docs/finite-size.md, "Optimisation"). Zero scores when that solve gives no certificate.
 */
export async function minTradeoffScores(
  problem: Problem,
  honest: readonly number[],
  solver: SingleRoundSolver,
  settings: Partial<SolverSettings>,
): Promise<number[]> {
  const marginal = problem.sourceMarginal ? sourceMarginalConstraints(problem.sourceMarginal, problem.dimensionB) : [];
  const branchConstraints = branchOperators(problem).map((operator, c) => ({
    label: `branch ${problem.branches[c].label}`,
    operator,
    lower: honest[c],
    upper: honest[c],
  }));
  const tested: Problem = { ...problem, constraints: [...marginal, ...branchConstraints], branches: problem.branches.map((b) => ({ ...b, score: 0 })) };
  const result = await solver(tested, { kind: 'von-neumann' }, settings);
  const tradeoff = minTradeoffOf(tested, result);
  if (!tradeoff) return problem.branches.map(() => 0);
  const coefficients = tradeoff.coefficients.slice(marginal.length).map((c) => c.coefficient);
  // The dual's coefficients are one member of a class with the same rate on every allowed state; take the quietest.
  return leastVarianceScores(problem, coefficients, honest);
}

/** Devetak–Winter reference: the certified von Neumann bound under the problem's statistics minus λ_EC per round. */
export async function asymptoticReference(
  problem: Problem,
  leakagePerRound: number,
  solver: SingleRoundSolver,
  settings: Partial<SolverSettings>,
): Promise<NonNullable<KeyLengthReport['asymptotic']>> {
  const plain: Problem = { ...problem, branches: problem.branches.map((b) => ({ ...b, score: 0 })) };
  const result = await solver(plain, { kind: 'von-neumann' }, settings);
  const bound = result.certifiedLowerBound;
  return {
    vonNeumannBound: bound,
    ratePerRound: bound === null ? null : bound - leakagePerRound,
    minTradeoff: minTradeoffOf(plain, result),
  };
}

export { MIN_ALPHA_EXCESS };
