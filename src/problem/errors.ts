// Errors about one input value. Imports nothing, so every layer (problem, settings, oracle) can share it.

/**
 * The base of every "this input value is wrong" error: `field` is the path of the offending value (for example
 * "branches[1].keyProjectors[0]" or "settings.gapTolerance"), `reason` says what is wrong with it. Callers that
 * report bad input (the CLI, the service) catch this one type.
 */
export class FieldError extends Error {
  readonly field: string;
  readonly reason: string;

  constructor(field: string, reason: string) {
    super(`${field}: ${reason}`);
    this.name = new.target.name;
    this.field = field;
    this.reason = reason;
  }
}

/** Bad input in a problem, request or command-line argument. */
export class ValidationError extends FieldError {}
