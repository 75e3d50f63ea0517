// The public solver: set-up, iterations until certified or a limit, certification of the last iterate, result.
// Every phase polls one checkpoint (time limit and cancellation); an interruption keeps the best valid bound.
import { whilePolling, withoutPolling } from '../linear-algebra/interruption.js';
import type { EntropyRequest, Problem } from '../problem/model.js';
import type { SolveResult } from '../result/types.js';
import { certifyLastIterate } from './certify.js';
import { assembleResult, interruptedBeforeStart, resultWithoutBound } from './finish.js';
import { iterate, reachedLimit } from './iterate.js';
import { resolveSolverSettings, type SolveControl, type SolverSettings } from './settings.js';
import { resultBase, setUp, type SetUpOutcome } from './setup.js';
import { RunClock, SolveInterrupted, type ResultBase, type SolverSetup } from './state.js';
import { hasLiftedFaceBound, liftsInDoubleDouble } from '../certificate/lifted-face.js';
import { createObjective, largestDimension } from '../objectives/index.js';

/** The last certification may run past the limit by this share of it (at least LAST_CERTIFICATE_MIN_MS)… */
const LAST_CERTIFICATE_SHARE = 0.05;
/** …so that the run ends within max(10 %, 1 s) of its limit, with room for assembling the result. */
const LAST_CERTIFICATE_MIN_MS = 500;
/** Objective evaluations kept in reserve for assembling the result (the certificate's F and the upper bound). */
const ASSEMBLY_EVALUATIONS = 2;

/** Frank–Wolfe with pairwise steps over the feasible density operators, certified by a dual bound. */
export function solve(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings> = {},
  control: SolveControl = {},
): SolveResult {
  const settings = resolveSolverSettings(partialSettings);
  const clock = new RunClock(settings.timeLimitMs, control.isCancelled);
  // Long kernels poll the checkpoint too: one eigendecomposition or objective evaluation at d = 256 takes seconds.
  const onFace = whilePolling(clock.checkpoint, () => run(problem, request, settings, control, clock, true));
  // A bound on an exposed face carries its continuity margin (docs/faces.md): when that keeps it from certifying,
  // the rest of the time goes to the full space, and the result with the smaller gap is returned.
  if (onFace.status === 'CERTIFIED' || !onFace.certificate?.faceExposures || control.isCancelled?.()) return onFace;
  if (clock.elapsedMs() > (1 - FULL_SPACE_LEFT) * settings.timeLimitMs) return onFace;
  clock.deadlineMs = settings.timeLimitMs;
  const full = whilePolling(clock.checkpoint, () => run(problem, request, settings, control, clock, false));
  const faceGap = onFace.gap ?? Infinity;
  if ((full.gap ?? Infinity) < faceGap) {
    const note = `on the exposed face the gap was ${faceGap.toExponential(3)} (a bound there carries the continuity margin of docs/faces.md); this bound is from the full space`;
    return { ...full, notes: [...(full.notes ?? []), note] };
  }
  const note = `the full space, tried after the exposed face for the rest of the time, ended with gap ${(full.gap ?? Infinity).toExponential(3)}`;
  return { ...onFace, seconds: clock.elapsedMs() / 1000, oracleSeconds: clock.oracleSeconds, notes: [...(onFace.notes ?? []), note] };
}

/**
 * One lift weight in double-double at dimension 65: measured 1–2.5 s idle (sandwiched-up the most) and up to about 4 s
 * with the suite's second worker on the machine's other core, with room.
 */
const LIFT_RESERVE_MS_AT_65 = 5000;

/**
 * Time kept for one lifted point in double-double (a run stopped by its time limit tries one weight, finish.ts): about
 * n³ like its eigendecompositions; none off a face or on the double path.
 */
function liftReserveMs(setup: SolverSetup): number {
  const { face, activeProblem, entropy } = setup;
  if (face.exposures.length === 0 || !hasLiftedFaceBound(entropy.kind)) return 0;
  const whole = createObjective(activeProblem, entropy);
  if (!liftsInDoubleDouble(whole)) return 0;
  return LIFT_RESERVE_MS_AT_65 * (largestDimension(whole) / 65) ** 3;
}

/** The full space is tried after an uncertified face only while at least this share of the time limit is left. */
const FULL_SPACE_LEFT = 0.25;

function run(
  problem: Problem,
  request: EntropyRequest,
  settings: SolverSettings,
  control: SolveControl,
  clock: RunClock,
  exposeFace: boolean,
): SolveResult {
  const base = resultBase(problem, request, settings);
  let outcome: SetUpOutcome;
  try {
    outcome = setUp(problem, request, settings, control, clock, base, exposeFace);
  } catch (error) {
    if (error instanceof RangeError) return arithmeticFailed(base, clock, 'set-up', error, 0);
    if (!(error instanceof SolveInterrupted)) throw error;
    return interruptedBeforeStart(base, clock, problem, error.limit);
  }
  if (!outcome.ready) return outcome.result;
  const { setup, state } = outcome;
  // Assembling the result re-evaluates F about twice (measured: 1.6 evaluations), and on an exposed face lifts the
  // face state in double-double: the run stops that much earlier.
  const assemblyMs = ASSEMBLY_EVALUATIONS * outcome.evaluationMs + liftReserveMs(setup);
  clock.deadlineMs = settings.timeLimitMs - assemblyMs;
  try {
    for (;;) {
      state.limit = reachedLimit(setup, state);
      if (state.limit !== undefined) break;
      const step = iterate(setup, state);
      if (step === 'stop') break;
      if (step !== 'continue') return resultWithoutBound(setup.base, clock, step.failure, state.iterations);
    }
  } catch (error) {
    if (error instanceof RangeError) return arithmeticFailed(base, clock, `iteration ${state.iterations}`, error, state.iterations);
    if (!(error instanceof SolveInterrupted)) throw error;
    state.limit = error.limit;
  }
  // A limit is a result with a valid bound, so the last iterate is certified too, within a short extension.
  if (state.limit !== undefined || state.best === null) {
    if (state.limit !== 'cancelled') {
      const extension = Math.max(LAST_CERTIFICATE_SHARE * settings.timeLimitMs, LAST_CERTIFICATE_MIN_MS);
      clock.deadlineMs = Math.max(clock.elapsedMs(), settings.timeLimitMs - assemblyMs) + extension;
    }
    try {
      certifyLastIterate(setup, state);
    } catch (error) {
      if (error instanceof RangeError) return arithmeticFailed(base, clock, 'the last certification', error, state.iterations);
      if (!(error instanceof SolveInterrupted)) throw error;
    }
  }
  try {
    return withoutPolling(() => assembleResult(setup, state));
  } catch (error) {
    if (error instanceof RangeError) return arithmeticFailed(base, clock, 'assembling the result', error, state.iterations);
    throw error;
  }
}

/**
 * The kernels signal arithmetic that failed (a non-finite entry, a singular factor) with a RangeError: the solve
 * then ends as NUMERICAL_ERROR, naming the phase, instead of throwing (docs/convergence.md, "Non-finite steps").
 */
function arithmeticFailed(base: ResultBase, clock: RunClock, phase: string, error: RangeError, iterations: number): SolveResult {
  return resultWithoutBound(base, clock, `arithmetic failed in ${phase}: ${error.message}`, iterations);
}
