// The score-weighted single-round bound h^f_α (docs/finite-size.md, "Single round"): the problem's branches with
// scores f, no statistical constraints (the statistics enter through f), the source marginal kept. Each value is
// the solver's certified lower bound; the optimal state's tilted branch weights give a supergradient (Danskin).
import { solve } from '../frank-wolfe/solve.js';
import type { SolveResult } from '../result/types.js';
import type { SolverSettings } from '../frank-wolfe/settings.js';
import type { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { createObjective } from '../objectives/index.js';
import { matrixFromJson, matrixToJson, type ProblemJson } from '../problem/json.js';
import type { EntropyKind, EntropyRequest, Problem } from '../problem/model.js';
import { sourceMarginalConstraints } from '../problem/validate.js';

/** Rényi kinds the finite-size layer accepts: sandwiched-up (tight) and petz-up (faster, lower: Araki–Lieb–Thirring). */
export type FiniteSizeEntropy = Extract<EntropyKind, 'sandwiched-up' | 'petz-up'>;

/** Solves one single-round problem (the service passes one that goes through the result cache). */
export type SingleRoundSolver = (
  problem: Problem,
  request: EntropyRequest,
  settings: Partial<SolverSettings>,
  warmStart?: ComplexMatrix,
) => Promise<SolveResult>;

/** The in-process solver. */
export const localSolver: SingleRoundSolver = async (problem, request, settings, warmStart) =>
  solve(problem, request, settings, warmStart ? { warmStart } : {});

export interface SingleRoundValue {
  alpha: number;
  scores: number[];
  /** Certified lower bound on h^f_α (bits), or null when the solve gave none. */
  bound: number | null;
  result: SolveResult;
  /** Normalised tilted branch weights q_c at the final state (uniform when not asked for): −q is a supergradient of h^f_α in f. */
  tiltedWeights: number[];
  finalState?: ComplexMatrix;
}

/** The problem h^f_α is taken over: branches with the given scores, only the source-marginal equalities kept. */
export function scoredProblem(base: Problem, scores: readonly number[]): Problem {
  const problem: Problem = {
    dimensionA: base.dimensionA,
    dimensionB: base.dimensionB,
    constraints: base.sourceMarginal ? sourceMarginalConstraints(base.sourceMarginal, base.dimensionB) : [],
    branches: base.branches.map((b, c) => ({ ...b, score: scores[c] })),
  };
  if (base.sourceMarginal) problem.sourceMarginal = base.sourceMarginal;
  return problem;
}

/**
 * q_c = v_c/Σv with v_c = 2^{((1−α)/α)·F_c(ρ)}, F_c the objective of branch c alone: the objective is
 * (α/(1−α))·log Σ_c v_c, so ∂F/∂f(c) = −q_c at a fixed state (docs/finite-size.md, "Score ascent").
 */
export function tiltedBranchWeights(problem: Problem, request: Required<EntropyRequest>, state: ComplexMatrix): number[] {
  const exponent = (1 - request.alpha) / request.alpha;
  const v = problem.branches.map((branch) => {
    const alone = { ...problem, constraints: [], branches: [branch] };
    const value = createObjective(alone, request).evaluate(state, { withGradient: false }).value;
    return Number.isFinite(value) ? 2 ** (exponent * value) : 0;
  });
  const total = v.reduce((a, b) => a + b, 0);
  return v.map((x) => x / total);
}

/** One certified evaluation of h^f_α. */
export async function singleRoundValue(
  base: Problem,
  kind: FiniteSizeEntropy,
  alpha: number,
  scores: readonly number[],
  settings: Partial<SolverSettings>,
  solver: SingleRoundSolver,
  warmStart?: ComplexMatrix,
  withWeights = true,
): Promise<SingleRoundValue> {
  const problem = scoredProblem(base, scores);
  const request = { kind, alpha } as const;
  const result = await solver(problem, request, settings, warmStart);
  const bound =
    (result.status === 'CERTIFIED' || result.status === 'LIMIT_REACHED') && result.certifiedLowerBound !== null
      ? result.certifiedLowerBound
      : null;
  const finalState = result.finalState ? matrixFromJson(result.finalState, 'finalState') : undefined;
  const tiltedWeights = finalState && withWeights
    ? tiltedBranchWeights(problem, request, finalState)
    : base.branches.map(() => 1 / base.branches.length);
  return { alpha, scores: [...scores], bound, result, tiltedWeights, finalState };
}

const SOURCE_MARGINAL_LABEL = /^sourceMarginal/;

/** A validated problem back in protobuf JSON (the source-marginal equalities are regenerated from the marginal). */
export function problemToJson(problem: Problem): ProblemJson {
  const json: ProblemJson = {
    dimensionA: problem.dimensionA,
    dimensionB: problem.dimensionB,
    constraints: problem.constraints
      .filter((c) => !(problem.sourceMarginal && SOURCE_MARGINAL_LABEL.test(c.label)))
      .map((c) => ({ label: c.label, operator: matrixToJson(c.operator), lower: c.lower, upper: c.upper })),
    branches: problem.branches.map((b) => ({
      label: b.label,
      krausOperators: b.krausOperators.map(matrixToJson),
      keyProjectors: b.keyProjectors.map(matrixToJson),
      score: b.score,
    })),
  };
  if (problem.sourceMarginal) json.sourceMarginal = matrixToJson(problem.sourceMarginal);
  return json;
}
