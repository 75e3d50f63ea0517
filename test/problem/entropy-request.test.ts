// Entropy kinds and the α rule (src/problem/entropy-request.ts): one reader for every name form, one rule.
import { describe, expect, it } from 'vitest';
import { ValidationError } from '../../src/problem/errors.js';
import { entropyKindFrom, entropyRequestFrom, resolveEntropyRequest } from '../../src/problem/entropy-request.js';

function fieldError(run: () => unknown): { field: string; reason: string } {
  try {
    run();
  } catch (error) {
    if (error instanceof ValidationError) return { field: error.field, reason: error.reason };
    throw error;
  }
  throw new Error('expected a ValidationError');
}

describe('entropy kinds', () => {
  it('reads command-line names, proto enum names and enum numbers alike', () => {
    expect(entropyKindFrom('petz-up')).toBe('petz-up');
    expect(entropyKindFrom('SANDWICHED_UP')).toBe('sandwiched-up');
    expect(entropyKindFrom(3)).toBe('petz-down');
    expect(fieldError(() => entropyKindFrom('renyi', 'grid.entropies[1]'))).toEqual({
      field: 'grid.entropies[1]',
      reason: 'unknown entropy kind "renyi" (expected one of von-neumann, petz-up, petz-down, sandwiched-up)',
    });
    expect(fieldError(() => entropyKindFrom('ENTROPY_KIND_UNSPECIFIED')).reason).toMatch(/^must be specified/);
  });

  it('α ∈ (1, 2] for Rényi kinds, none for von Neumann', () => {
    expect(entropyRequestFrom('VON_NEUMANN', 1)).toEqual({ kind: 'von-neumann' });
    expect(fieldError(() => entropyRequestFrom('von-neumann', 1.5)).field).toBe('alpha');
    expect(fieldError(() => entropyRequestFrom('petz-up', 1)).reason).toMatch(/must lie in \(1, 2\]/);
    expect(entropyRequestFrom('petz-up', 2)).toEqual({ kind: 'petz-up', alpha: 2 });
  });
});

describe('the rule: request α, else problem α, else an error for Rényi kinds', () => {
  const problemDefault = { kind: 'petz-up' as const, alpha: 1.5 };
  it('kind and α from the request win over the problem', () => {
    expect(resolveEntropyRequest({ kind: 'SANDWICHED_UP', alpha: 1.25 }, problemDefault)).toEqual({ kind: 'sandwiched-up', alpha: 1.25 });
  });
  it('a requested Rényi kind without α takes the problem’s α', () => {
    expect(resolveEntropyRequest({ kind: 'petz-down' }, problemDefault)).toEqual({ kind: 'petz-down', alpha: 1.5 });
  });
  it('no requested kind: the problem’s kind, with the requested α if any', () => {
    expect(resolveEntropyRequest({ kind: 'ENTROPY_KIND_UNSPECIFIED' }, problemDefault)).toEqual(problemDefault);
    expect(resolveEntropyRequest({ alpha: 2 }, problemDefault)).toEqual({ kind: 'petz-up', alpha: 2 });
  });
  it('von Neumann ignores the problem’s α but rejects a requested one', () => {
    expect(resolveEntropyRequest({ kind: 'von-neumann' }, problemDefault)).toEqual({ kind: 'von-neumann' });
    expect(fieldError(() => resolveEntropyRequest({ kind: 'von-neumann', alpha: 1.5 }, problemDefault)).field).toBe('alpha');
  });
  it('errors name the missing field', () => {
    expect(fieldError(() => resolveEntropyRequest({}, undefined)).field).toBe('entropy');
    expect(fieldError(() => resolveEntropyRequest({ kind: 'petz-up' }, undefined))).toEqual({
      field: 'alpha',
      reason: 'is required for petz-up (a Rényi order in (1, 2])',
    });
  });
});
