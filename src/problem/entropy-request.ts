// Entropy kinds and the Rényi order: their names (command line and proto enum), and the one rule that decides
// which kind and order a request bounds. Every reader (CLI, service, grid files, clients) goes through here.
import { ValidationError } from './errors.js';
import { ENTROPY_KINDS, type EntropyKind, type EntropyRequest } from './model.js';

/** Proto enum names of the entropy kinds, by kind. */
export const ENTROPY_ENUM_NAMES: Readonly<Record<EntropyKind, string>> = {
  'von-neumann': 'VON_NEUMANN',
  'petz-up': 'PETZ_UP',
  'petz-down': 'PETZ_DOWN',
  'sandwiched-up': 'SANDWICHED_UP',
};

/** The enum's "no kind given" value. */
export const UNSPECIFIED_ENTROPY_ENUM = 'ENTROPY_KIND_UNSPECIFIED';

/** Enum names by number (the protobuf JSON mapping also accepts the number). */
const ENUM_BY_NUMBER: readonly string[] = [UNSPECIFIED_ENTROPY_ENUM, 'VON_NEUMANN', 'PETZ_UP', 'PETZ_DOWN', 'SANDWICHED_UP'];

/** Smallest (exclusive) and largest Rényi order accepted: α ∈ (1, 2], where the objectives are convex (docs/math.md §1). */
export const ALPHA_EXCLUSIVE_MINIMUM = 1;
export const ALPHA_MAXIMUM = 2;

/** True for a value that means "no kind given": absent, '', the UNSPECIFIED enum name or its number 0. */
export function isUnspecifiedEntropy(value: unknown): boolean {
  return value === undefined || value === null || value === '' || value === UNSPECIFIED_ENTROPY_ENUM || value === 0;
}

/** A kind written as 'petz-up', 'PETZ_UP' or the enum number; `field` names the input in errors. */
export function entropyKindFrom(value: unknown, field = 'entropy'): EntropyKind {
  const name = typeof value === 'number' && Number.isInteger(value) ? ENUM_BY_NUMBER[value] : value;
  if (typeof name !== 'string') throw new ValidationError(field, 'must be a string naming an entropy kind');
  if ((ENTROPY_KINDS as readonly string[]).includes(name)) return name as EntropyKind;
  for (const kind of ENTROPY_KINDS) if (ENTROPY_ENUM_NAMES[kind] === name) return kind;
  if (isUnspecifiedEntropy(name)) throw new ValidationError(field, `must be specified (one of ${ENTROPY_KINDS.join(', ')})`);
  throw new ValidationError(field, `unknown entropy kind ${JSON.stringify(name)} (expected one of ${ENTROPY_KINDS.join(', ')})`);
}

/** 'petz-up' → 'PETZ_UP'. */
export function entropyKindToEnum(kind: EntropyKind): string {
  return ENTROPY_ENUM_NAMES[kind];
}

/**
 * A complete request for a given kind and order. Rényi kinds need α ∈ (1, 2]; von Neumann takes no α
 * (α = 1 is accepted as its limit).
 */
export function entropyRequestFrom(kind: unknown, alpha?: number): EntropyRequest {
  const resolved = entropyKindFrom(kind);
  if (resolved === 'von-neumann') {
    if (alpha !== undefined && alpha !== 1) {
      throw new ValidationError('alpha', `must be omitted for von-neumann (got ${alpha}); it has no Rényi order`);
    }
    return { kind: resolved };
  }
  if (alpha === undefined) throw new ValidationError('alpha', `is required for ${resolved} (a Rényi order in (1, 2])`);
  if (!Number.isFinite(alpha)) throw new ValidationError('alpha', `must be a finite number (got ${alpha})`);
  if (!(alpha > ALPHA_EXCLUSIVE_MINIMUM && alpha <= ALPHA_MAXIMUM)) {
    throw new ValidationError('alpha', `must lie in (1, 2] for ${resolved}; Rényi objectives are not convex outside it`);
  }
  return { kind: resolved, alpha };
}

/**
 * The one rule for which entropy a request bounds (command line and service alike):
 * - kind: the request's, else the problem's `entropy`, else an error;
 * - α: the request's, else the problem's `alpha`, else an error for a Rényi kind. Von Neumann has no order: a
 *   problem's α (meant for its own Rényi kind) does not apply to it, and an α requested with it is an error.
 * `requested.kind` may be a command-line name, an enum name or unspecified.
 */
export function resolveEntropyRequest(
  requested: { kind?: unknown; alpha?: number },
  problemDefault: EntropyRequest | undefined,
): EntropyRequest {
  const kind = isUnspecifiedEntropy(requested.kind) ? problemDefault?.kind : entropyKindFrom(requested.kind);
  if (kind === undefined) throw new ValidationError('entropy', 'is required: name it with the command or request, or set entropy in the problem');
  if (kind === 'von-neumann') return entropyRequestFrom(kind, requested.alpha);
  return entropyRequestFrom(kind, requested.alpha ?? problemDefault?.alpha);
}
