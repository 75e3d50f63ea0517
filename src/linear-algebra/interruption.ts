// The deadline poll inside long kernels. A run installs its checkpoint (time limit and cancellation) while it
// runs; eigensolvers and products on large matrices call pollInterruption() between their stages, and the
// checkpoint throws to abort. Kernels only write their own outputs and scratch space before a stage ends, so an
// abort leaves no caller state half-updated. A run is synchronous and every worker thread has its own copy of
// this module, so one slot per thread suffices; nested runs restore the outer checkpoint.

/** Matrices from this order on poll: one stage then costs ≳ 0.1 ms, so the poll's ~50 ns do not show. */
export const POLLED_ORDER = 64;

/** Stages (Householder columns, QL eigenvalues, back-transformed vectors) between two polls inside one kernel. */
export const STAGES_PER_POLL = 32;

let installed: (() => void) | undefined;

/** Calls the installed checkpoint (which may throw to abort); a no-op outside a run. */
export function pollInterruption(): void {
  installed?.();
}

/** pollInterruption() for a kernel on n×n matrices: only at orders where one call costs milliseconds. */
export function pollAtOrder(n: number): void {
  if (n >= POLLED_ORDER) installed?.();
}

/** Runs `run` with `checkpoint` as the poll of every kernel it calls (an undefined one keeps the outer poll). */
export function whilePolling<T>(checkpoint: (() => void) | undefined, run: () => T): T {
  return withInstalled(checkpoint ?? installed, run);
}

/** Runs `run` with no poll installed: for work that must complete once the run has stopped (assembling a result). */
export function withoutPolling<T>(run: () => T): T {
  return withInstalled(undefined, run);
}

function withInstalled<T>(checkpoint: (() => void) | undefined, run: () => T): T {
  const outer = installed;
  installed = checkpoint;
  try {
    return run();
  } finally {
    installed = outer;
  }
}
