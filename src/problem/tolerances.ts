// Tolerances of input validation. They accept rounding-level defects of exactly specified data and reject
// anything a person or a program could have meant differently.

/** Largest relative non-Hermitian part max|A − A†| / ‖A‖_F accepted for operators meant to be Hermitian. */
export const HERMITICITY_TOLERANCE = 1e-9;

/**
 * Largest entry of a residual accepted in the structural identities: P² = P for key projectors, Σ P = 1 for key
 * maps and POVMs, Σ K†K = 1 for the branch set (the identity's entries are 1, so this is a relative measure).
 */
export const STRUCTURE_TOLERANCE = 1e-9;

/** Smallest eigenvalue accepted for a positive semidefinite operator, relative to max(1, ‖A‖_F), is −this. */
export const POSITIVITY_TOLERANCE = 1e-9;

/** Largest |Tr ρ − 1| accepted for density operators (source marginal, states passed to the CLI). */
export const TRACE_TOLERANCE = 1e-9;

/**
 * A probability table must sum to 1 within this plus the entries' own allowance (entry count × tolerance);
 * a table that misses 1 by more cannot come from any density operator.
 */
export const PROBABILITY_SUM_TOLERANCE = 1e-9;

/** Default upper limit on the joint dimension dimensionA·dimensionB and on every branch output dimension. */
export const DEFAULT_MAX_DIMENSION = 256;
