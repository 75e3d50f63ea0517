// The objectives along a walk of nearby states, as a solver meets them: sandwiched-up then starts each inner τ loop
// warm from the previous state and takes a few steps per evaluation (the fixed-ρ table in solver.ts takes none).
import { ComplexMatrix } from '../linear-algebra/complex-matrix.js';
import { createObjective } from '../objectives/index.js';
import type { EntropyRequest } from '../problem/model.js';
import { benchDensity, uniformSource, type BenchTable } from './inputs.js';
import { medianMilliseconds } from './linear-algebra.js';
import { randomModel } from './random-models.js';

const WALK_POINTS = 40;

/** ρ_t = (1 − λ_t)·truth + λ_t·σ_t, λ_t = 0.05 + 0.3·|sin(t/6)|: states that come and go around the generating state. */
function walkAround(truth: ComplexMatrix): ComplexMatrix[] {
  return Array.from({ length: WALK_POINTS }, (_, t) => {
    const other = benchDensity(truth.rows, uniformSource(t + 1));
    const lambda = 0.05 + 0.3 * Math.abs(Math.sin(t / 6));
    const point = new ComplexMatrix(truth.rows, truth.cols);
    for (let k = 0; k < point.re.length; k++) {
      point.re[k] = (1 - lambda) * truth.re[k] + lambda * other.re[k];
      point.im[k] = (1 - lambda) * truth.im[k] + lambda * other.im[k];
    }
    return point;
  });
}

/** Value + gradient per evaluation along the walk near the random suite's d8#1 (each pass starts a fresh objective). */
export function benchObjectiveWalk(): BenchTable {
  const model = randomModel(8, 1);
  const points = walkAround(model.truth);
  const requests: EntropyRequest[] = [
    { kind: 'petz-up', alpha: 1.5 },
    { kind: 'sandwiched-up', alpha: 1.5 },
  ];
  const rows = requests.map((request) => {
    const pass = () => {
      const objective = createObjective(model.problem, request);
      for (const rho of points) objective.evaluate(rho);
    };
    return [model.name, request.kind, Number((medianMilliseconds(pass) / WALK_POINTS).toPrecision(3))];
  });
  return {
    title: `Objective value + gradient along a ${WALK_POINTS}-point walk near a random model's generating state (CPU ms per evaluation, median; α = 1.5)`,
    columns: ['model', 'kind', 'ms per evaluation'],
    rows,
  };
}
