/** Bad input: `field` is the path of the offending value (for example "branches[1].keyProjectors[0]"). */
export class ValidationError extends Error {
  readonly field: string;
  readonly reason: string;

  constructor(field: string, reason: string) {
    super(`${field}: ${reason}`);
    this.name = 'ValidationError';
    this.field = field;
    this.reason = reason;
  }
}
