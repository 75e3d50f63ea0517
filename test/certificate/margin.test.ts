// The bound's margin at boundary optima, and the closed-form pairing ⟨∇F(ρ'), ρ'⟩ it relies on.
import { describe, expect, it } from 'vitest';
import { certificateBreakdown, eulerInnerProduct } from '../../src/certificate/bound.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { conjugate, hermitianPart, traceProductReal, type ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { feasibleFace } from '../../src/problem/feasible-face.js';
import { matrixFromJson, matrixToJson } from '../../src/problem/json.js';
import type { EntropyRequest, Problem } from '../../src/problem/model.js';
import { randomDensity, randomUnitary, seededRandom, type RandomSource } from '../helpers/random.js';
import { randomInstrumentProblem } from '../objectives/fixtures.js';
import { example } from '../frank-wolfe/helpers.js';
import { rotated } from './rotation.js';

const KINDS: EntropyRequest[] = [
  { kind: 'von-neumann' },
  { kind: 'petz-up', alpha: 1.4 },
  { kind: 'petz-down', alpha: 1.7 },
  { kind: 'sandwiched-up', alpha: 2 },
];

describe("Euler's identity for positively homogeneous functions: ⟨∇f(x), x⟩ = k·f(x) for f of degree k", () => {
  for (const request of KINDS) {
    it(`${request.kind}: the computed pairing matches the closed form on random instruments with scores`, () => {
      const rng = seededRandom(31);
      const problem = randomInstrumentProblem(2, 3, [7, 3], [2, 1], [0.3, -0.2], rng);
      const objective = createObjective(problem, request);
      for (let trial = 0; trial < 4; trial++) {
        const rho = randomDensity(6, rng);
        const e = objective.evaluate(rho);
        let pairing = traceProductReal(e.gradient!, rho);
        if (request.kind === 'sandwiched-up') {
          // Jointly in (ρ, τ): Q̃_β(X‖τ) is of degree β in X and 1 − β in τ.
          const joint = objective.evaluateAtReference(rho, e.reference!);
          pairing = traceProductReal(joint.gradientState, rho);
          joint.gradientReference.forEach((blocks, c) => blocks.forEach((g, k) => (pairing += traceProductReal(g, e.reference![c][k]))));
        }
        const closed = eulerInnerProduct(objective, e.value);
        expect(Math.abs(pairing - closed)).toBeLessThanOrEqual(1e-11 * (1 + Math.abs(closed)));
      }
    });
  }
});

/** The same state with every entry moved by up to two roundings (as a re-typed or re-encoded certificate would be). */
function reRounded(state: ComplexMatrix, rng: RandomSource): ComplexMatrix {
  const moved = state.clone();
  for (let k = 0; k < moved.re.length; k++) {
    moved.re[k] *= 1 + 2 * Number.EPSILON * (rng() - 0.5);
    moved.im[k] *= 1 + 2 * Number.EPSILON * (rng() - 0.5);
  }
  return hermitianPart(moved);
}

const BB84_NEAR_ZERO = { 'qber-z': 1e-4, 'qber-x': 1e-4 };

describe('near-singular linearization points: bounds recomputed in random bases stay within the margin', () => {
  const cases: [string, Record<string, number>, EntropyRequest][] = [
    ['chsh-tested', { 'win-probability': 0.85 }, { kind: 'petz-up', alpha: 2 }],
    ['chsh-tested', { 'win-probability': 0.8 }, { kind: 'petz-up', alpha: 2 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'petz-up', alpha: 2 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'sandwiched-up', alpha: 1.5 }],
    ['chsh-tested', { 'win-probability': 0.8 }, { kind: 'sandwiched-up', alpha: 2 }],
    ['chsh-tested', { 'win-probability': 0.85 }, { kind: 'von-neumann' }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'petz-up', alpha: 1.5 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'petz-down', alpha: 1.1 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'petz-down', alpha: 1.5 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'sandwiched-up', alpha: 2 }],
    ['bb84-entangled', BB84_NEAR_ZERO, { kind: 'von-neumann' }],
    ['chsh-tested', { 'win-probability': 0.85 }, { kind: 'sandwiched-up', alpha: 1.5 }],
  ];
  for (const [name, params, request] of cases) {
    it(`${name} ${JSON.stringify(params)}, ${request.kind}${request.alpha ? ` α = ${request.alpha}` : ''}`, () => {
      const problem = example(name, params);
      const result = solve(problem, request, { gapTolerance: 1e-6, maxIterations: 40 });
      const certificate = result.certificate!;
      const at = (p: Problem, rho: ComplexMatrix) =>
        certificateBreakdown(feasibleFace(p), p, createObjective(p, request), { ...certificate, linearizationState: matrixToJson(rho) });
      // The certified point, and the final iterate itself with the same multipliers: at an optimum inside the cone
      // ∇F − Σ yΓ is nearly a multiple of 1, so the iterate's smallest eigenvector is among its smallest ones and the
      // error amplified by 1/λ_min(ρ') reaches the bound in full (bounds there move by ~1e-7 under re-rounding).
      for (const state of [certificate.linearizationState, result.finalState!].map((m) => matrixFromJson(m, 'state'))) {
        const reference = at(problem, state);
        const rng = seededRandom(2026);
        for (let trial = 0; trial < 8; trial++) {
          const u = randomUnitary(4, rng);
          const again = at(rotated(problem, u), conjugate(u, state));
          const spread = Math.abs(again.lowerBound + again.margin - (reference.lowerBound + reference.margin));
          expect(spread).toBeLessThanOrEqual(Math.min(reference.margin, again.margin));
          const retyped = at(problem, reRounded(state, rng));
          expect(Math.abs(retyped.lowerBound + retyped.margin - (reference.lowerBound + reference.margin))).toBeLessThanOrEqual(
            Math.min(reference.margin, retyped.margin),
          );
        }
      }
    });
  }
});

describe('boundary optima: BB84 with an eigenvalue near Q² certifies with the graded conditioning charge', () => {
  // These ended no-progress on the Weyl charge alone (gaps 1.1e-6 to 2.4e-6 with margins 4e-7 to 1.3e-6).
  const requests: EntropyRequest[] = [
    { kind: 'petz-up', alpha: 1.5 },
    { kind: 'petz-up', alpha: 2 },
    { kind: 'petz-down', alpha: 1.5 },
    { kind: 'sandwiched-up', alpha: 1.5 },
    { kind: 'sandwiched-up', alpha: 2 },
  ];
  for (const request of requests) {
    it(`bb84-entangled Q = 1e-4, ${request.kind} α = ${request.alpha}: CERTIFIED at gap 1e-6, margin below the Weyl charge`, () => {
      const problem = example('bb84-entangled', BB84_NEAR_ZERO);
      const result = solve(problem, request, { gapTolerance: 1e-6, maxIterations: 40 });
      expect(result.status).toBe('CERTIFIED');
      expect(result.gap!).toBeLessThanOrEqual(1e-6);
      const state = matrixFromJson(result.certificate!.linearizationState, 'state');
      const recomputed = certificateBreakdown(feasibleFace(problem), problem, createObjective(problem, request), result.certificate!);
      // The Weyl charge at this point would be scale·κ(ρ')/ln 2 with κ(ρ') ≥ 1e7 (an eigenvalue near 1e-8).
      expect(recomputed.conditioningCharge).toBeLessThan(1e-6);
      expect(state.rows).toBe(4);
    });
  }
});
