// One solve of the random suite, in a worker thread: build the model from (dimension, seed), solve, verify, and
// compare the bound with F at the generating state.
import { verifyResult } from '../certificate/verify.js';
import { solve } from '../frank-wolfe/solve.js';
import { createObjective } from '../objectives/index.js';
import type { EntropyRequest } from '../problem/model.js';
import { randomModel } from './random-models.js';

export interface SuiteTask {
  dimension: number;
  seed: number;
  request: EntropyRequest;
  gapTolerance: number;
  timeLimitMs: number;
}

export interface SuiteOutcome {
  name: string;
  status: string;
  limit: string | null;
  gap: number | null;
  seconds: number;
  oracleSeconds: number;
  iterations: number;
  /** verifyResult's verdict (null when the result carries no certificate). */
  verified: boolean | null;
  /** The certified bound is at most F(truth) (null without a bound). */
  belowTruth: boolean | null;
  message: string | null;
}

/** Slack for "bound ≤ F(truth)": rounding in the two evaluations only. */
const TRUTH_SLACK = 1e-9;

/** One small untimed solve per kind when the thread starts, so the first timed solve does not pay the JIT's compilation. */
function warmUp(): void {
  const model = randomModel(4, 1);
  for (const request of [{ kind: 'von-neumann' }, { kind: 'petz-up', alpha: 1.5 }, { kind: 'petz-down', alpha: 1.5 }, { kind: 'sandwiched-up', alpha: 1.5 }] as EntropyRequest[]) {
    solve(model.problem, request, { gapTolerance: 1e-6, timeLimitMs: 2000 });
  }
}
warmUp();

export default function runSuiteTask(task: SuiteTask): SuiteOutcome {
  const model = randomModel(task.dimension, task.seed);
  const result = solve(model.problem, task.request, { gapTolerance: task.gapTolerance, timeLimitMs: task.timeLimitMs });
  const bound = result.certifiedLowerBound;
  let belowTruth: boolean | null = null;
  if (bound !== null) {
    const atTruth = createObjective(model.problem, task.request).evaluate(model.truth).value;
    belowTruth = bound <= atTruth + TRUTH_SLACK * (1 + Math.abs(atTruth));
  }
  return {
    name: model.name,
    status: result.status,
    limit: result.limit ?? null,
    gap: result.gap,
    seconds: result.seconds,
    oracleSeconds: result.oracleSeconds,
    iterations: result.iterations,
    verified: result.certificate ? verifyResult(model.problem, task.request, result).valid : null,
    belowTruth,
    message: result.status === 'NUMERICAL_ERROR' ? (result.message ?? null) : null,
  };
}
