import { describe, expect, it } from 'vitest';
import { eigs, matrix } from 'mathjs';
import {
  ComplexMatrix,
  addScaledInPlace,
  conjugate,
  kron,
  partialTraceB,
  trace,
  traceProductReal,
} from '../../src/linear-algebra/complex-matrix.js';
import { EXAMPLES, buildExample } from '../../src/protocols/index.js';
import { ValidationError, problemFromJson } from '../../src/problem/validate.js';
import { matrixFromJson } from '../../src/problem/json.js';
import type { Problem } from '../../src/problem/model.js';

/** |v⟩⟨v| for a real vector. */
function pure(vector: number[]): ComplexMatrix {
  const n = vector.length;
  const m = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) m.re[i * n + j] = vector[i] * vector[j];
  return m;
}

const s = Math.SQRT1_2;
// Bell states in the basis |00⟩, |01⟩, |10⟩, |11⟩.
const PHI_PLUS = [s, 0, 0, s];
const PHI_MINUS = [s, 0, 0, -s];
const PSI_PLUS = [0, s, s, 0];
const PSI_MINUS = [0, s, -s, 0];

function bellDiagonal(weights: [number, number, number, number]): ComplexMatrix {
  const rho = new ComplexMatrix(4, 4);
  [PHI_PLUS, PHI_MINUS, PSI_PLUS, PSI_MINUS].forEach((v, k) => addScaledInPlace(rho, pure(v), weights[k]));
  return rho;
}

function expectation(problem: Problem, label: string, rho: ComplexMatrix): number {
  const constraint = problem.constraints.find((c) => c.label === label);
  if (constraint === undefined) throw new Error(`no constraint ${label}`);
  return traceProductReal(constraint.operator, rho);
}

/** Every constraint lower − slack ≤ Tr(Γρ) ≤ upper + slack. */
function expectSatisfies(problem: Problem, rho: ComplexMatrix, slack = 1e-13): void {
  for (const c of problem.constraints) {
    const value = traceProductReal(c.operator, rho);
    expect(value, c.label).toBeGreaterThanOrEqual(c.lower - slack);
    expect(value, c.label).toBeLessThanOrEqual(c.upper + slack);
  }
}

function validDensityOperator(rho: ComplexMatrix): void {
  expect(trace(rho).re).toBeCloseTo(1, 14);
  const values = eigs(matrix(toRows(rho)), { eigenvectors: false }).values.valueOf() as number[];
  expect(Math.min(...values)).toBeGreaterThan(-1e-14);
}

function toRows(m: ComplexMatrix): number[][] {
  for (const x of m.im) if (x !== 0) throw new Error('toRows: complex matrix');
  return Array.from({ length: m.rows }, (_, i) => Array.from(m.re.slice(i * m.cols, (i + 1) * m.cols)));
}

describe('example registry', () => {
  const cases: [string, Record<string, number>][] = [
    ['bb84-entangled', {}],
    ['bb84-entangled', { 'qber-z': 0, 'qber-x': 0.11 }],
    ['six-state', { qber: 0.126 }],
    ['chsh-tested', { 'win-probability': 0.9 }], // beyond Tsirelson: builders do not judge physics
    ['bb84-prepare-measure', {}],
    ['bb84-prepare-measure', { qber: 0.05, transmittance: 0.1, 'z-basis-probability': 0.9 }],
    ['bb84-prepare-measure', { qber: 0, transmittance: 0, 'z-basis-probability': 1 }],
  ];
  it.each(cases)('%s %j builds a problem that passes validation', (name, params) => {
    const problem = problemFromJson(JSON.parse(JSON.stringify(buildExample(name, params))));
    expect(problem.branches.length).toBeGreaterThan(0);
  });

  it('lists the four examples of the contract', () => {
    expect(Object.keys(EXAMPLES)).toEqual(['bb84-entangled', 'six-state', 'chsh-tested', 'bb84-prepare-measure']);
  });

  it('accepts camelCase parameter names', () => {
    expect(buildExample('bb84-entangled', { qberZ: 0.02 })).toEqual(buildExample('bb84-entangled', { 'qber-z': 0.02 }));
  });

  const errors: [string, () => unknown, string][] = [
    ['unknown example', () => buildExample('bb85'), 'name: unknown example "bb85" (expected one of bb84-entangled, six-state, chsh-tested, bb84-prepare-measure)'],
    ['unknown parameter', () => buildExample('six-state', { 'qber-z': 0.1 }), 'qber-z: unknown parameter for six-state (expected qber, test-probability)'],
    ['parameter out of range', () => buildExample('bb84-prepare-measure', { transmittance: 1.5 }), 'transmittance: must lie in [0, 1] (got 1.5)'],
    ['parameter not finite', () => buildExample('chsh-tested', { 'win-probability': Number.NaN }), 'win-probability: must be a finite number (got NaN)'],
  ];
  it.each(errors)('%s', (_name, run, message) => {
    expect(run).toThrow(ValidationError);
    expect(run).toThrow(message);
  });
});

describe('bb84-entangled and six-state', () => {
  it('error operators vanish on |Φ+⟩ (perfect correlations in Z and X, anti-correlation in Y; common practice)', () => {
    const problem = problemFromJson(buildExample('six-state', { qber: 0.1 }));
    const phiPlus = pure(PHI_PLUS);
    for (const label of ['qber-z', 'qber-x', 'qber-y']) expect(expectation(problem, label, phiPlus)).toBeCloseTo(0, 15);
  });

  it('the Bell-diagonal state ((1−Q)², Q(1−Q), Q(1−Q), Q²) meets the BB84 constraints (Shor & Preskill 2000)', () => {
    const q = 0.07;
    const problem = problemFromJson(buildExample('bb84-entangled', { 'qber-z': q, 'qber-x': q }));
    const rho = bellDiagonal([(1 - q) ** 2, q * (1 - q), q * (1 - q), q * q]);
    expectSatisfies(problem, rho);
    expect(expectation(problem, 'qber-z', rho)).toBeCloseTo(q, 15);
  });

  it('the Bell-diagonal state (1 − 3Q/2, Q/2, Q/2, Q/2) meets the six-state constraints (Lo 2001)', () => {
    const q = 0.1;
    const problem = problemFromJson(buildExample('six-state', { qber: q }));
    expectSatisfies(problem, bellDiagonal([1 - (3 * q) / 2, q / 2, q / 2, q / 2]));
  });

  it('the key map is Alice’s Z outcome with the identity as Kraus operator', () => {
    const problem = problemFromJson(buildExample('bb84-entangled', {}));
    expect(problem.branches).toHaveLength(1);
    const rho = pure([0, 0, 1, 0]); // |10⟩: Alice's Z outcome is 1
    const [zero, one] = problem.branches[0].keyProjectors;
    expect(traceProductReal(zero, rho)).toBe(0);
    expect(traceProductReal(one, rho)).toBe(1);
  });
});

describe('chsh-tested', () => {
  const problem = problemFromJson(buildExample('chsh-tested', { 'win-probability': 0.8 }));
  const w = problem.constraints[0].operator;
  const tsirelson = Math.cos(Math.PI / 8) ** 2;

  it('W on |Φ+⟩ with these observables is cos²(π/8) (Tsirelson 1980)', () => {
    expect(traceProductReal(w, pure(PHI_PLUS))).toBeCloseTo(tsirelson, 15);
  });

  it('the largest eigenvalue of W is cos²(π/8), by mathjs (Tsirelson 1980: no state wins more often)', () => {
    const values = eigs(matrix(toRows(w)), { eigenvectors: false }).values.valueOf() as number[];
    expect(Math.max(...values)).toBeCloseTo(tsirelson, 12);
    expect(Math.min(...values)).toBeCloseTo(1 - tsirelson, 12);
  });
});

describe('bb84-prepare-measure', () => {
  // The channel written independently as Kraus operators on Bob's space (qubit levels 0, 1; vacuum level 2):
  // depolarising D(σ) = (1 − 3q/2)σ + (q/2)(XσX + YσY + ZσZ), error rate q in Z and X (common practice),
  // then loss: the photon is kept with probability η, else replaced by the vacuum.
  function channelKraus(q: number, eta: number, dB: number): ComplexMatrix[] {
    const embed = (entries: ([number, number] | number)[][]) => {
      const m = new ComplexMatrix(dB, dB);
      for (let i = 0; i < 2; i++) {
        for (let j = 0; j < 2; j++) {
          const e = entries[i][j];
          if (typeof e === 'number') m.re[i * dB + j] = e;
          else m.set(i, j, e[0], e[1]);
        }
      }
      return m;
    };
    const paulis = [
      embed([[1, 0], [0, 1]]),
      embed([[0, 1], [1, 0]]),
      embed([[0, [0, -1]], [[0, 1], 0]]),
      embed([[1, 0], [0, -1]]),
    ];
    const weights = [1 - (3 * q) / 2, q / 2, q / 2, q / 2];
    const depolarising = paulis.map((p, k) => {
      const m = p.clone();
      for (let i = 0; i < m.re.length; i++) {
        m.re[i] *= Math.sqrt(weights[k]);
        m.im[i] *= Math.sqrt(weights[k]);
      }
      return m;
    });
    if (dB === 2) return depolarising;
    const kept = embed([[Math.sqrt(eta), 0], [0, Math.sqrt(eta)]]);
    const lost = [0, 1].map((level) => {
      const m = new ComplexMatrix(dB, dB);
      m.re[2 * dB + level] = Math.sqrt(1 - eta);
      return m;
    });
    // Loss after depolarising: compose every pair (L·D).
    const composed: ComplexMatrix[] = [];
    for (const loss of [kept, ...lost]) {
      for (const d of depolarising) composed.push(conjugateProduct(loss, d));
    }
    return composed;
  }

  function conjugateProduct(a: ComplexMatrix, b: ComplexMatrix): ComplexMatrix {
    const n = a.rows;
    const c = new ComplexMatrix(n, n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        for (let k = 0; k < n; k++) {
          const ar = a.re[i * n + k], ai = a.im[i * n + k], br = b.re[k * n + j], bi = b.im[k * n + j];
          c.re[i * n + j] += ar * br - ai * bi;
          c.im[i * n + j] += ar * bi + ai * br;
        }
      }
    }
    return c;
  }

  /** (1_A ⊗ N)(|ψ⟩⟨ψ|) with |ψ⟩ = Σ_i √p_i |i⟩|φ_i⟩ (source replacement). */
  function expectedState(q: number, eta: number, pZ: number): ComplexMatrix {
    const dB = eta < 1 ? 3 : 2;
    const p = [pZ / 2, pZ / 2, (1 - pZ) / 2, (1 - pZ) / 2];
    const states = [[1, 0], [0, 1], [s, s], [s, -s]];
    const psi = new Array<number>(4 * dB).fill(0);
    for (let i = 0; i < 4; i++) for (let b = 0; b < 2; b++) psi[i * dB + b] = Math.sqrt(p[i]) * states[i][b];
    const before = pure(psi);
    const rho = new ComplexMatrix(4 * dB, 4 * dB);
    for (const k of channelKraus(q, eta, dB)) addScaledInPlace(rho, conjugate(kron(ComplexMatrix.identity(4), k), before), 1);
    return rho;
  }

  const settings: [number, number, number][] = [
    [0.02, 1, 0.5],
    [0.05, 0.1, 0.5],
    [0.11, 0.3, 0.8],
    [0, 1, 0.25],
  ];

  it.each(settings)('q=%f η=%f p_Z=%f: the channel output satisfies every constraint', (q, eta, pZ) => {
    const problem = problemFromJson(buildExample('bb84-prepare-measure', { qber: q, transmittance: eta, 'z-basis-probability': pZ }));
    const rho = expectedState(q, eta, pZ);
    validDensityOperator(rho);
    expect(problem.dimensionB).toBe(eta < 1 ? 3 : 2);
    expectSatisfies(problem, rho);
    // The marginal constraints agree with the partial trace of the channel output.
    const marginal = partialTraceB(rho, 4, problem.dimensionB);
    for (let k = 0; k < 16; k++) expect(problem.sourceMarginal!.re[k]).toBeCloseTo(marginal.re[k], 15);
  });

  it.each(settings)('q=%f η=%f p_Z=%f: the key branch has probability p_Z²·η (common practice)', (q, eta, pZ) => {
    const problem = problemFromJson(buildExample('bb84-prepare-measure', { qber: q, transmittance: eta, 'z-basis-probability': pZ }));
    const rho = expectedState(q, eta, pZ);
    const [keyBranch, noKey] = problem.branches;
    expect(keyBranch.keyProjectors).toHaveLength(2);
    expect(noKey.keyProjectors).toHaveLength(1);
    const probability = trace(conjugate(keyBranch.krausOperators[0], rho)).re;
    expect(probability).toBeCloseTo(pZ * pZ * eta, 14);
    expect(trace(conjugate(noKey.krausOperators[0], rho)).re).toBeCloseTo(1 - pZ * pZ * eta, 14);
  });

  it.each([
    [0.02, 1, 0.5, 0.05],
    [0.05, 0.1, 0.9, 0.2],
  ])('q=%f η=%f p_Z=%f γ=%f: test-round form carries the honest branch distribution of the channel output', (q, eta, pZ, gamma) => {
    const problem = problemFromJson(
      buildExample('bb84-prepare-measure', { qber: q, transmittance: eta, 'z-basis-probability': pZ, 'test-probability': gamma }),
    );
    const rho = expectedState(q, eta, pZ);
    expectHonestDistribution(problem, rho);
    expect(problem.branches.map((b) => b.label)).toContain('test-x-error');
    // Key rounds: p_Z²·η of them are key (common practice), with H(S|B) = h(q) for the depolarising channel.
    expect(problem.honestStatistics!.branchProbabilities[0]).toBeCloseTo((1 - gamma) * pZ * pZ * eta, 14);
    expect(problem.honestStatistics!.errorCorrectionEntropy[0]).toBeCloseTo(shannonBinary(q), 14);
  });

  it('the source marginal has rank 2 with eigenvalues 1/2, 1/2 (ρ_A has the spectrum of Σ p_i|φ_i⟩⟨φ_i| = 1/2; mathjs)', () => {
    const json = buildExample('bb84-prepare-measure', { 'z-basis-probability': 0.7 });
    const marginal = matrixFromJson(json.sourceMarginal, 'sourceMarginal');
    const values = (eigs(matrix(toRows(marginal)), { eigenvectors: false }).values.valueOf() as number[]).sort((a, b) => a - b);
    expect(values[0]).toBeCloseTo(0, 14);
    expect(values[1]).toBeCloseTo(0, 14);
    expect(values[2]).toBeCloseTo(0.5, 14);
    expect(values[3]).toBeCloseTo(0.5, 14);
  });
});

/** −q log q − (1−q) log(1−q), written here independently of the builders. */
function shannonBinary(q: number): number {
  return q === 0 ? 0 : -(q * Math.log2(q) + (1 - q) * Math.log2(1 - q));
}

/** Every branch probability Σ_j Tr(K_j ρ K_j†) equals the problem's honest distribution; the branches are complete. */
function expectHonestDistribution(problem: Problem, rho: ComplexMatrix): void {
  const honest = problem.honestStatistics!.branchProbabilities;
  expect(honest).toHaveLength(problem.branches.length);
  problem.branches.forEach((branch, c) => {
    const p = branch.krausOperators.reduce((acc, k) => acc + trace(conjugate(k, rho)).re, 0);
    expect(p, branch.label).toBeCloseTo(honest[c], 13);
  });
  expect(honest.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 13);
}

describe('test-round forms (--test-probability γ)', () => {
  it('leave the default output unchanged when γ is 0 or absent', () => {
    for (const name of ['bb84-entangled', 'six-state', 'bb84-prepare-measure']) {
      const plain = buildExample(name);
      expect(buildExample(name, { 'test-probability': 0 })).toEqual(plain);
      expect(plain).not.toHaveProperty('honestStatistics');
    }
  });

  it('entangled BB84: key rounds plus X-test outcomes, honest distribution of a Bell-diagonal state', () => {
    const [qz, qx, gamma] = [0.03, 0.05, 0.1];
    const problem = problemFromJson(buildExample('bb84-entangled', { 'qber-z': qz, 'qber-x': qx, 'test-probability': gamma }));
    const w = qz * qx;
    const rho = bellDiagonal([1 - qz - qx + w, qx - w, qz - w, w]);
    expectSatisfies(problem, rho);
    expectHonestDistribution(problem, rho);
    expect(problem.branches.map((b) => b.label)).toEqual(['key', 'test-x-agree', 'test-x-error']);
    expect(problem.honestStatistics!.errorCorrectionEntropy).toEqual([shannonBinary(qz), 0, 0].map((x) => expect.closeTo(x, 14)));
  });

  it('six-state: tests in X, Y and Z; the Bell-diagonal state (1 − 3Q/2, Q/2, Q/2, Q/2) (Lo 2001) gives the distribution', () => {
    const [q, gamma] = [0.04, 0.3];
    const problem = problemFromJson(buildExample('six-state', { qber: q, 'test-probability': gamma }));
    const rho = bellDiagonal([1 - (3 * q) / 2, q / 2, q / 2, q / 2]);
    expectSatisfies(problem, rho);
    expectHonestDistribution(problem, rho);
    expect(problem.branches).toHaveLength(7);
  });
});
