import { describe, expect, it } from 'vitest';
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { LinearOracle, OracleInputError, type OracleConstraint } from '../../src/oracle/index.js';
import { randomHermitian, seededRandom } from '../helpers/random.js';

const hermitian = randomHermitian(3, seededRandom(1));
const valid: OracleConstraint = { label: 'ok', operator: hermitian, lower: -1, upper: 1 };

function errorOf(action: () => unknown): OracleInputError {
  try {
    action();
  } catch (error) {
    expect(error).toBeInstanceOf(OracleInputError);
    return error as OracleInputError;
  }
  throw new Error('expected an OracleInputError');
}

describe('LinearOracle input checks name the field and the reason', () => {
  it('dimension', () => {
    expect(errorOf(() => new LinearOracle(0, [])).message).toBe('dimension: must be a positive integer, got 0');
    expect(errorOf(() => new LinearOracle(2.5, [])).field).toBe('dimension');
  });

  it('constraint operators: shape and Hermiticity', () => {
    const wrongShape = { ...valid, operator: ComplexMatrix.identity(2) };
    expect(errorOf(() => new LinearOracle(3, [valid, wrongShape])).message).toBe('constraints[1].operator: must be 3x3, got 2x2');
    const notHermitian = ComplexMatrix.from([
      [1, 2, 0],
      [0, 1, 0],
      [0, 0, 1],
    ]);
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, operator: notHermitian }])).message).toBe('constraints[0].operator: is not Hermitian');
    const notFinite = hermitian.clone();
    notFinite.re[4] = Number.NaN;
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, operator: notFinite }])).message).toBe('constraints[0].operator: entry (1, 1) is not finite');
  });

  it('constraint bounds', () => {
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, lower: 2, upper: 1 }])).message).toBe('constraints[0].lower: exceeds upper (2 > 1)');
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, lower: Number.NaN }])).field).toBe('constraints[0].lower');
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, upper: -Infinity }])).field).toBe('constraints[0].upper');
    expect(errorOf(() => new LinearOracle(3, [{ ...valid, label: 7 as unknown as string }])).field).toBe('constraints[0].label');
  });

  it('settings', () => {
    expect(errorOf(() => new LinearOracle(3, [], { relativeAccuracy: 0 })).message).toBe('settings.relativeAccuracy: must be a number in (0, 0.1], got 0');
    expect(errorOf(() => new LinearOracle(3, [], { maxIterations: 1.5 })).field).toBe('settings.maxIterations');
    const oracle = new LinearOracle(3, [valid]);
    expect(errorOf(() => oracle.minimize(hermitian, { relativeAccuracy: 1 })).field).toBe('settings.relativeAccuracy');
  });

  it('the gradient G and the matrices to project', () => {
    const oracle = new LinearOracle(3, [valid]);
    expect(errorOf(() => oracle.minimize(ComplexMatrix.identity(4))).message).toBe('G: must be 3x3, got 4x4');
    expect(errorOf(() => oracle.projectOntoEqualities(ComplexMatrix.identity(2))).field).toBe('X');
    expect(errorOf(() => oracle.stripEqualitySpan(ComplexMatrix.identity(2))).field).toBe('G');
  });

  it('an iteration limit is a result, not an exception', () => {
    const oracle = new LinearOracle(3, [valid], { maxIterations: 2 });
    const result = oracle.minimize(hermitian);
    expect(result.status).toBe('ITERATION_LIMIT');
    expect(result.point).not.toBeNull();
    expect(Number.isFinite(result.dualBound)).toBe(true);
    expect(result.message).toContain('interior-point iterations');
  });
});
