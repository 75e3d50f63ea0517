/** Enters every input hash: results from another solver version are never reused from a cache. */
export const SOLVER_VERSION = 'renyi-bound-solver/0.12.0';
