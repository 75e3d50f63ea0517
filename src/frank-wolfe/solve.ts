// The public solver: set-up, iterations until certified or a limit, certification of the last iterate, result.
// Every phase polls one checkpoint (time limit and cancellation); an interruption keeps the best valid bound.
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { SolveResult } from '../result/types.js';
import { certifyLastIterate } from './certify.js';
import { assembleResult, interruptedBeforeStart, resultWithoutBound } from './finish.js';
import { iterate, reachedLimit } from './iterate.js';
import { resolveSolverSettings, type SolveControl, type SolverSettings } from './settings.js';
import { resultBase, setUp, type SetUpOutcome } from './setup.js';
import { RunClock, SolveInterrupted } from './state.js';

/** The last certification may run past the limit by this share of it (at least LAST_CERTIFICATE_MIN_MS)… */
const LAST_CERTIFICATE_SHARE = 0.05;
/** …so that the run ends within max(10 %, 1 s) of its limit, with room for assembling the result. */
const LAST_CERTIFICATE_MIN_MS = 500;

/** Frank–Wolfe with pairwise steps over the feasible density operators, certified by a dual bound. */
export function solve(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings> = {},
  control: SolveControl = {},
): SolveResult {
  const settings = resolveSolverSettings(partialSettings);
  const clock = new RunClock(settings.timeLimitMs, control.isCancelled);
  const base = resultBase(problem, request, settings);
  let outcome: SetUpOutcome;
  try {
    outcome = setUp(problem, request, settings, control, clock, base);
  } catch (error) {
    if (!(error instanceof SolveInterrupted)) throw error;
    return interruptedBeforeStart(base, clock, problem, error.limit);
  }
  if (!outcome.ready) return outcome.result;
  const { setup, state } = outcome;
  try {
    for (;;) {
      state.limit = reachedLimit(setup, state);
      if (state.limit !== undefined) break;
      const step = iterate(setup, state);
      if (step === 'stop') break;
      if (step !== 'continue') return resultWithoutBound(setup.base, clock, step.failure, state.iterations);
    }
  } catch (error) {
    if (!(error instanceof SolveInterrupted)) throw error;
    state.limit = error.limit;
  }
  // A limit is a result with a valid bound, so the last iterate is certified too, within a short extension.
  if (state.limit !== undefined || state.best === null) {
    if (state.limit !== 'cancelled') {
      clock.deadlineMs = Math.max(clock.elapsedMs(), settings.timeLimitMs) + Math.max(LAST_CERTIFICATE_SHARE * settings.timeLimitMs, LAST_CERTIFICATE_MIN_MS);
    }
    try {
      certifyLastIterate(setup, state);
    } catch (error) {
      if (!(error instanceof SolveInterrupted)) throw error;
    }
  }
  return assembleResult(setup, state);
}
