// One field-error base type for validation, settings and oracle input: callers catch FieldError once.
import { describe, expect, it } from 'vitest';
import { resolveSolverSettings, SettingsError } from '../../src/frank-wolfe/settings.js';
import { FieldError, ValidationError } from '../../src/problem/errors.js';
import { OracleInputError } from '../../src/oracle/types.js';

describe('FieldError', () => {
  it('is the base of ValidationError, SettingsError and OracleInputError, each with field, reason and its own name', () => {
    for (const Type of [ValidationError, SettingsError, OracleInputError]) {
      const error = new Type('a.b[1]', 'must be positive');
      expect(error).toBeInstanceOf(FieldError);
      expect(error).toBeInstanceOf(Error);
      expect(error.field).toBe('a.b[1]');
      expect(error.reason).toBe('must be positive');
      expect(error.message).toBe('a.b[1]: must be positive');
      expect(error.name).toBe(Type.name);
    }
  });

  it('a solver setting out of range is a FieldError naming the setting', () => {
    let thrown: unknown;
    try {
      resolveSolverSettings({ gapTolerance: -1 });
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(FieldError);
    expect((thrown as FieldError).field).toMatch(/gapTolerance$/);
  });
});
