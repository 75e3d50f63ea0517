// The floating-point constants every rank decision, spectral-edge test and certificate margin uses
// (docs/math.md §5). Defined here once.

/** Unit roundoff of IEEE-754 double precision, u = 2⁻⁵³. */
export const UNIT_ROUNDOFF = 2 ** -53;

/**
 * The generous constant c in the backward-error scale c·n·u·‖A‖_F of a stable Hermitian eigensolver: the room
 * for rounding in forming A itself (sums of Kraus conjugations, Kronecker products) on top of the solver's own.
 */
export const BACKWARD_ERROR_CONSTANT = 64;
