// The public solver: set-up, iterations until certified or a limit, certification of the last iterate, result.
import type { EntropyRequest, Problem } from '../problem/model.js';
import { resultWithoutBound, assembleResult } from './finish.js';
import { certifyLastIterate } from './certify.js';
import { iterate, reachedLimit } from './iterate.js';
import type { SolveControl, SolverSettings } from './settings.js';
import { setUp } from './setup.js';
import type { SolveResult } from '../result/types.js';

/** Frank–Wolfe with pairwise steps over the feasible density operators, certified by a dual bound. */
export function solve(
  problem: Problem,
  request: EntropyRequest,
  partialSettings: Partial<SolverSettings> = {},
  control: SolveControl = {},
): SolveResult {
  const outcome = setUp(problem, request, partialSettings, control);
  if (!outcome.ready) return outcome.result;
  const { setup, state } = outcome;
  for (;;) {
    state.limit = reachedLimit(setup, state);
    if (state.limit !== undefined) break;
    const step = iterate(setup, state);
    if (step === 'stop') break;
    if (step !== 'continue') return resultWithoutBound(setup.base, setup.clock, step.failure, state.iterations);
  }
  // A limit is a result with a valid bound, so the last iterate is certified too.
  if (state.limit !== undefined || state.best === null) certifyLastIterate(setup, state);
  return assembleResult(setup, state);
}
