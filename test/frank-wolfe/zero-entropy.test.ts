import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import { randomModel } from '../../src/bench/random-models.js';
import { trivialLowerBound } from '../../src/certificate/trivial-bound.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { spectralGap } from '../../src/frank-wolfe/face-newton.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { keyBlockBasis, zeroEntropyConstraints, zeroEntropyState } from '../../src/frank-wolfe/zero-entropy.js';
import { conjugate, frobeniusNorm, multiply, traceProductReal } from '../../src/linear-algebra/complex-matrix.js';
import { eigvalsh } from '../../src/linear-algebra/eigen.js';
import { createObjective } from '../../src/objectives/index.js';
import { LinearOracle } from '../../src/oracle/index.js';
import { reduceProblem } from '../../src/problem/inactive-bounds.js';
import { toMathjs } from '../linear-algebra/mathjs-bridge.js';
import { KINDS_AT_ONE_AND_A_HALF } from './helpers.js';

const KINDS = KINDS_AT_ONE_AND_A_HALF;

describe('the zero-entropy test (docs/convergence.md, "Optima at the trivial bound")', () => {
  // d = 8, seed 2 of the random suite: one branch, a full table of equalities; the key can be known to the eavesdropper.
  const model = randomModel(8, 2);
  const { face, restricted } = reduceProblem(model.problem);
  const found = zeroEntropyState(restricted, face.dimension);

  it('finds a density operator meeting every constraint of the problem', () => {
    expect(found).not.toBeNull();
    const rho = found!;
    expect(Math.abs(eigvalsh(rho).reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-9);
    expect(eigvalsh(rho)[0]).toBeGreaterThan(-1e-9);
    for (const c of restricted.constraints) {
      const v = traceProductReal(c.operator, rho);
      expect(v).toBeGreaterThanOrEqual(c.lower - 1e-8);
      expect(v).toBeLessThanOrEqual(c.upper + 1e-8);
    }
  });

  it('there every branch output is block diagonal in the key map, recomputed from the Kraus operators', () => {
    for (const branch of restricted.branches) {
      const x = branch.krausOperators.map((k) => conjugate(k, found!)).reduce((s, m) => {
        for (let t = 0; t < s.re.length; t++) (s.re[t] += m.re[t]), (s.im[t] += m.im[t]);
        return s;
      });
      branch.keyProjectors.forEach((p, a) =>
        branch.keyProjectors.forEach((q, b) => {
          if (a !== b) expect(frobeniusNorm(multiply(multiply(p, x), q))).toBeLessThan(1e-8);
        }),
      );
    }
  });

  it('so every kind equals the trivial bound there (D(X‖Z(X)) = 0 iff X = Z(X): Klein\'s inequality, Nielsen & Chuang Thm 11.7, from memory)', () => {
    for (const request of KINDS) {
      const value = createObjective(restricted, request).evaluate(found!).value;
      expect(Math.abs(value - trivialLowerBound(model.problem))).toBeLessThan(1e-8);
    }
  });

  it('has no solution where a verified bound lies above the trivial bound (d = 4, seed 1)', () => {
    const other = randomModel(4, 1);
    const certified = solve(other.problem, KINDS[0], { gapTolerance: 1e-6, timeLimitMs: 30000 });
    expect(verifyResult(other.problem, KINDS[0], certified).valid).toBe(true);
    expect(certified.certifiedLowerBound!).toBeGreaterThan(trivialLowerBound(other.problem) + 1e-3);
    const reduced = reduceProblem(other.problem);
    expect(zeroEntropyConstraints(reduced.restricted, reduced.face.dimension).length).toBeGreaterThan(0);
    expect(zeroEntropyState(reduced.restricted, reduced.face.dimension)).toBeNull();
  });

  it('a solve of that model certifies with the trivial bound, and the result verifies', () => {
    for (const request of [KINDS[0], KINDS[1]]) {
      const result = solve(model.problem, request, { gapTolerance: 1e-6, timeLimitMs: 30000 });
      expect(result.status).toBe('CERTIFIED');
      expect(result.trivialBoundUsed).toBe(true);
      expect(result.gap!).toBeGreaterThanOrEqual(0);
      expect(result.gap!).toBeLessThanOrEqual(1e-6);
      expect(verifyResult(model.problem, request, result).valid).toBe(true);
    }
  });
});

/** Eigenvalues of a Hermitian matrix from mathjs `eigs` (a general-purpose eigensolver outside the project). */
function mathjsEigenvalues(a: math.Matrix): number[] {
  const values = math.eigs(a, { eigenvectors: false }).values as math.Matrix;
  return (values.toArray() as (number | math.Complex)[]).map((v) => (typeof v === 'number' ? v : v.re));
}

/** von Neumann entropy in bits from a list of eigenvalues (0·log 0 = 0). */
function entropyBits(values: number[]): number {
  return values.reduce((s, v) => (v > 1e-300 ? s - v * Math.log2(v) : s), 0);
}

describe('the zero-entropy test in block form (docs/convergence.md, "Optima at the trivial bound")', () => {
  // d = 32, seed 2 of the random suite: one branch scored 0 (trivial bound 0), a single 33×32 Kraus operator and key
  // projectors of ranks 9, 8, 8, 8; as equalities the test would need 816 + 52 constraints (measured: 19.5 s).
  const model = randomModel(32, 2);
  const { face, restricted } = reduceProblem(model.problem);
  const [branch] = restricted.branches;

  it('reduces to blocks of ranks 8, 7, 7, 7: range K is a hyperplane of C^33 and cuts each key range by one', () => {
    expect(trivialLowerBound(model.problem)).toBe(0);
    expect(keyBlockBasis(restricted, face.dimension)?.sizes).toEqual([8, 7, 7, 7]);
  });

  it('finds a density operator meeting every constraint at which D(X‖Z(X)) = 0, recomputed with mathjs eigenvalues', () => {
    const rho = zeroEntropyState(restricted, face.dimension)!;
    expect(rho).not.toBeNull();
    for (const c of restricted.constraints) {
      const v = traceProductReal(c.operator, rho);
      expect(v).toBeGreaterThanOrEqual(c.lower - 1e-8);
      expect(v).toBeLessThanOrEqual(c.upper + 1e-8);
    }
    const k = toMathjs(branch.krausOperators[0]);
    const x = math.multiply(math.multiply(k, toMathjs(rho)), math.ctranspose(k)) as math.Matrix;
    const pinched = branch.keyProjectors
      .map((p) => toMathjs(p))
      .reduce((s, p) => math.add(s, math.multiply(math.multiply(p, x), p)) as math.Matrix, math.multiply(x, 0) as math.Matrix);
    const spectrum = mathjsEigenvalues(toMathjs(rho));
    expect(Math.min(...spectrum)).toBeGreaterThan(-1e-9);
    expect(Math.abs(spectrum.reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-9);
    // D(X‖Z(X)) = S(Z(X)) − S(X) for the pinching Z (common practice; it is F here, with score 0 and one branch).
    const divergence = entropyBits(mathjsEigenvalues(pinched)) - entropyBits(mathjsEigenvalues(x));
    expect(Math.abs(divergence)).toBeLessThan(1e-8);
  });

  it('agrees with the equality form where that is affordable (d = 16, seeds 1 and 3; d = 4, seed 1 has neither)', () => {
    for (const [d, seed] of [[16, 1], [16, 3], [4, 1]]) {
      const other = reduceProblem(randomModel(d, seed).problem);
      expect(keyBlockBasis(other.restricted, other.face.dimension)).not.toBeNull();
      const constraints = [...other.restricted.constraints, ...zeroEntropyConstraints(other.restricted, other.face.dimension)];
      const full = new LinearOracle(other.face.dimension, constraints, { relativeAccuracy: 1e-9 }).findFeasiblePoint();
      expect(zeroEntropyState(other.restricted, other.face.dimension) !== null).toBe(full.status === 'OPTIMAL');
    }
  });

  it('a von Neumann solve certifies the trivial bound 0, and the result verifies', () => {
    const result = solve(model.problem, KINDS[0], { gapTolerance: 1e-6, timeLimitMs: 30000 });
    expect(result.status).toBe('CERTIFIED');
    expect(result.trivialBoundUsed).toBe(true);
    expect(result.gap!).toBeGreaterThanOrEqual(0);
    expect(result.gap!).toBeLessThanOrEqual(1e-6);
    expect(verifyResult(model.problem, KINDS[0], result).valid).toBe(true);
  });
});

describe('spectral gap of the face-Newton phase', () => {
  const options = { gapRatio: 10, gapShare: 1e-3 };
  it('splits above a cluster of small eigenvalues', () => {
    expect(spectralGap([1e-9, 2e-9, 0.1, 0.3, 0.6], options)).toBe(2);
  });
  it('picks the widest gap below the share', () => {
    expect(spectralGap([1e-12, 1e-6, 1e-5, 0.2, 0.8], options)).toBe(1);
    expect(spectralGap([1e-9, 1e-6, 1e-5, 0.2, 0.8], options)).toBe(3);
  });
  it('finds none in a spectrum without one', () => {
    expect(spectralGap([0.1, 0.2, 0.3, 0.4], options)).toBe(0);
    expect(spectralGap([1e-5, 5e-5, 0.2, 0.75], { gapRatio: 1e5, gapShare: 1e-3 })).toBe(0);
  });
});
