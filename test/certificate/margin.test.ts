// The bound's margin at boundary optima, and the closed-form pairing ⟨∇F(ρ'), ρ'⟩ it relies on.
import { describe, expect, it } from 'vitest';
import { certificateBreakdown, eulerInnerProduct } from '../../src/certificate/bound.js';
import { solve } from '../../src/frank-wolfe/solve.js';
import { conjugate, traceProductReal, type ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';
import { createObjective } from '../../src/objectives/index.js';
import { feasibleFace } from '../../src/problem/feasible-face.js';
import { matrixFromJson, matrixToJson } from '../../src/problem/json.js';
import type { EntropyRequest, Problem } from '../../src/problem/model.js';
import { randomDensity, randomUnitary, seededRandom } from '../helpers/random.js';
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

describe('near-singular linearization points: bounds recomputed in random bases stay within the margin', () => {
  const cases: [string, Record<string, number>, EntropyRequest][] = [
    ['chsh-tested', { 'win-probability': 0.85 }, { kind: 'petz-up', alpha: 2 }],
    ['chsh-tested', { 'win-probability': 0.8 }, { kind: 'petz-up', alpha: 2 }],
    ['bb84-entangled', { 'qber-z': 1e-4, 'qber-x': 1e-4 }, { kind: 'petz-up', alpha: 2 }],
    ['bb84-entangled', { 'qber-z': 1e-4, 'qber-x': 1e-4 }, { kind: 'sandwiched-up', alpha: 1.5 }],
    ['chsh-tested', { 'win-probability': 0.8 }, { kind: 'sandwiched-up', alpha: 2 }],
    ['chsh-tested', { 'win-probability': 0.85 }, { kind: 'von-neumann' }],
    ['bb84-entangled', { 'qber-z': 1e-4, 'qber-x': 1e-4 }, { kind: 'petz-up', alpha: 1.5 }],
    ['bb84-entangled', { 'qber-z': 1e-4, 'qber-x': 1e-4 }, { kind: 'petz-down', alpha: 1.1 }],
  ];
  for (const [name, params, request] of cases) {
    it(`${name} ${JSON.stringify(params)}, ${request.kind}${request.alpha ? ` α = ${request.alpha}` : ''}`, () => {
      const problem = example(name, params);
      const result = solve(problem, request, { gapTolerance: 1e-6, maxIterations: 40 });
      const certificate = result.certificate!;
      const state = matrixFromJson(certificate.linearizationState, 'state');
      const at = (p: Problem, rho: ComplexMatrix) =>
        certificateBreakdown(feasibleFace(p), p, createObjective(p, request), { ...certificate, linearizationState: matrixToJson(rho) });
      const reference = at(problem, state);
      const rng = seededRandom(2026);
      for (let trial = 0; trial < 8; trial++) {
        const u = randomUnitary(4, rng);
        const again = at(rotated(problem, u), conjugate(u, state));
        const spread = Math.abs(again.lowerBound + again.margin - (reference.lowerBound + reference.margin));
        expect(spread).toBeLessThanOrEqual(Math.min(reference.margin, again.margin));
      }
    });
  }
});
