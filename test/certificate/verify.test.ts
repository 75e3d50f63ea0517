// The independent verifier: tampering is caught, the margin covers rounding, and no optimiser code is imported.
import { readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { linearizationBound } from '../../src/certificate/bound.js';
import { verifyInfeasibility, verifyResult } from '../../src/certificate/verify.js';
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { conjugate } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { matrixFromJson } from '../../src/problem/json.js';
import type { EntropyKind, Problem } from '../../src/problem/model.js';
import { randomUnitary, seededRandom } from '../helpers/random.js';
import { example } from '../frank-wolfe/helpers.js';
import { rotated } from './rotation.js';

const here = dirname(fileURLToPath(import.meta.url));
const sourceRoot = resolve(here, '../../src');

/** Every module reachable from `file` through non-type imports. */
function importClosure(file: string, seen = new Set<string>()): Set<string> {
  if (seen.has(file)) return seen;
  seen.add(file);
  const text = readFileSync(file, 'utf8');
  for (const match of text.matchAll(/^\s*(?:import|export)\s+(?!type\b)[^'"]*?from\s+'(\.[^']+)'/gm)) {
    importClosure(resolve(dirname(file), match[1].replace(/\.js$/, '.ts')), seen);
  }
  return seen;
}

describe('the verifier stands alone', () => {
  it('imports no optimiser code (Frank–Wolfe driver, line search, oracle)', () => {
    const closure = [...importClosure(join(sourceRoot, 'certificate/verify.ts'))].map((f) => f.slice(sourceRoot.length + 1));
    expect(closure).toContain('certificate/bound.ts');
    expect(closure.filter((f) => f.startsWith('frank-wolfe/') || f.startsWith('oracle/'))).toEqual([]);
  });
});

describe('tampered certificates are rejected', () => {
  const problem = example('bb84-entangled', { 'qber-z': 0.04, 'qber-x': 0.06 });
  const request = { kind: 'petz-up' as EntropyKind, alpha: 1.5 };
  const result = solve(problem, request);
  const copy = () => JSON.parse(JSON.stringify(result)) as typeof result;

  it('accepts the untouched certificate, and verifies after a JSON round trip', () => {
    expect(verifyResult(problem, request, copy()).valid).toBe(true);
  });

  it('rejects a raised claimed bound', () => {
    const tampered = copy();
    tampered.certificate!.claimedBound += 1e-9;
    tampered.certifiedLowerBound = tampered.certificate!.claimedBound;
    const report = verifyResult(problem, request, tampered);
    expect(report.valid).toBe(false);
    expect(report.reason).toMatch(/below the claimed/);
  });

  it('rejects a changed multiplier', () => {
    const tampered = copy();
    const c = tampered.certificate!;
    const i = c.multipliersLower.findIndex((y, k) => y + c.multipliersUpper[k] > 0);
    c.multipliersLower[i] += 0.5;
    expect(verifyResult(problem, request, tampered).valid).toBe(false);
  });

  it('rejects a certificate for another problem (input hash)', () => {
    const other = example('bb84-entangled', { 'qber-z': 0.04, 'qber-x': 0.061 });
    const report = verifyResult(other, request, copy());
    expect(report.valid).toBe(false);
    expect(report.reason).toMatch(/input hash/);
  });

  it('rejects a negative multiplier and another entropy kind', () => {
    const negative = copy();
    negative.certificate!.multipliersUpper[0] = -1;
    expect(verifyResult(problem, request, negative).reason).toMatch(/non-negative/);
    expect(verifyResult(problem, { kind: 'petz-down', alpha: 1.5 }, copy()).valid).toBe(false);
  });
});

/**
 * Deliberately perturbed computation: the same bound evaluated in a random unitary basis (Kraus K·U†,
 * constraints UΓU†, ρ' → Uρ'U†) is mathematically identical, so the spread must stay inside the reported margin.
 */
describe('the floating-point margin covers rounding (docs/math.md §5: conservative estimate, not interval arithmetic)', () => {
  const cases: [string, Record<string, number>, EntropyKind, number | undefined][] = [
    ['bb84-entangled', { 'qber-z': 0.03, 'qber-x': 0.05 }, 'von-neumann', undefined],
    ['chsh-tested', { 'win-probability': 0.85 }, 'petz-up', 1.3],
    ['six-state', { qber: 0.04 }, 'petz-down', 1.7],
  ];
  for (const [name, params, kind, alpha] of cases) {
    it(`${name}, ${kind}: bounds recomputed in 8 random bases stay within the margin`, () => {
      const problem = example(name, params);
      const result = solve(problem, { kind, alpha });
      const cert = result.certificate!;
      const state = matrixFromJson(cert.linearizationState, 'state');
      const reference = linearizationBound(problem, createObjective(problem, { kind, alpha }), state, cert.multipliersLower, cert.multipliersUpper);
      const rng = seededRandom(2024);
      for (let trial = 0; trial < 8; trial++) {
        const u = randomUnitary(problem.dimensionA * problem.dimensionB, rng);
        const turned = rotated(problem, u);
        const again = linearizationBound(turned, createObjective(turned, { kind, alpha }), conjugate(u, state), cert.multipliersLower, cert.multipliersUpper);
        const unmargined = reference.lowerBound + reference.margin;
        expect(Math.abs(again.lowerBound + again.margin - unmargined)).toBeLessThanOrEqual(Math.min(reference.margin, again.margin));
      }
    });
  }
});

describe('Farkas certificates of infeasible data are re-checked (docs/math.md §4; Tsirelson 1980 for the CHSH case)', () => {
  it('accepts the solver’s certificate for a CHSH win probability above cos²(π/8)', () => {
    const problem = example('chsh-tested', { 'win-probability': 0.9 });
    const result = solve(problem, { kind: 'von-neumann' });
    expect(result.status).toBe('INFEASIBLE');
    const report = verifyInfeasibility(problem, result.infeasibility!);
    expect(report.valid).toBe(true);
  });

  it('accepts it for statistics inconsistent with the source marginal, and names the table entries', () => {
    const json = buildExample('bb84-prepare-measure', { qber: 0.02 }) as { observations: { probabilities: number[] }[] };
    // Move weight between two entries of Alice's |0⟩ row and |1⟩ row: the table's marginal no longer matches ρ_A.
    json.observations[0].probabilities[0] += 0.05;
    json.observations[0].probabilities[5] -= 0.05;
    const problem = problemFromJson(json);
    const result = solve(problem, { kind: 'von-neumann' });
    expect(result.status).toBe('INFEASIBLE');
    expect(result.infeasibility!.dominantConstraints.join(' ')).toMatch(/probabilities|sourceMarginal/);
    expect(verifyInfeasibility(problem, result.infeasibility!).valid).toBe(true);
  });

  it('rejects multipliers that prove nothing, and a certificate held against feasible data', () => {
    const infeasible = example('chsh-tested', { 'win-probability': 0.9 });
    const zero = { multipliersLower: [0], multipliersUpper: [0] };
    expect(verifyInfeasibility(infeasible, zero).valid).toBe(false);
    const result = solve(infeasible, { kind: 'von-neumann' });
    const feasible = example('chsh-tested', { 'win-probability': 0.8 });
    expect(verifyInfeasibility(feasible, result.infeasibility!).valid).toBe(false);
  });
});
