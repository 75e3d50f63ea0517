import { addScaledInPlace, ComplexMatrix, scale, traceProductReal } from '../linear-algebra/complex-matrix.js';

/**
 * A pair enters only when cos∠(s, y) exceeds this (the cautious update, common practice): each stored pair multiplies
 * the two-loop recursion by up to ‖s‖‖y‖/(s·y), and near the cone's boundary a pair at cos 1e-10 turned a gradient
 * of size 1 into a direction of size 1e12 (docs/convergence.md, "Non-finite steps").
 */
const SMALLEST_PAIR_COSINE = 1e-4;

/**
 * Limited-memory BFGS on the tangent space of the equality constraints (Hermitian matrices orthogonal to the
 * identity and every equality operator, with the Hilbert–Schmidt inner product). Frank–Wolfe converges
 * sublinearly on curved feasible sets; these interior steps give the fast local convergence, while the oracle
 * still supplies every certificate.
 */
export class TangentQuasiNewton {
  private readonly steps: ComplexMatrix[] = [];
  private readonly gradientChanges: ComplexMatrix[] = [];
  private readonly curvatures: number[] = [];

  constructor(private readonly memory: number) {}

  get ready(): boolean {
    return this.steps.length > 0;
  }

  reset(): void {
    this.steps.length = 0;
    this.gradientChanges.length = 0;
    this.curvatures.length = 0;
  }

  /** Records a step s and the change y of the tangent gradient; pairs without clearly positive curvature are skipped. */
  update(step: ComplexMatrix, gradientChange: ComplexMatrix): void {
    const curvature = traceProductReal(step, gradientChange);
    const lengths = Math.sqrt(traceProductReal(step, step) * traceProductReal(gradientChange, gradientChange));
    if (!(curvature > SMALLEST_PAIR_COSINE * lengths)) return;
    this.steps.push(step);
    this.gradientChanges.push(gradientChange);
    this.curvatures.push(curvature);
    if (this.steps.length > this.memory) {
      this.steps.shift();
      this.gradientChanges.shift();
      this.curvatures.shift();
    }
  }

  /** −H·g by the two-loop recursion, H₀ = (s·y)/(y·y) of the newest pair. */
  direction(tangentGradient: ComplexMatrix): ComplexMatrix {
    const q = tangentGradient.clone();
    const k = this.steps.length;
    const alphas = new Float64Array(k);
    for (let i = k - 1; i >= 0; i--) {
      alphas[i] = traceProductReal(this.steps[i], q) / this.curvatures[i];
      addScaledInPlace(q, this.gradientChanges[i], -alphas[i]);
    }
    const newest = this.gradientChanges[k - 1];
    const r = scale(q, this.curvatures[k - 1] / traceProductReal(newest, newest));
    for (let i = 0; i < k; i++) {
      const beta = traceProductReal(this.gradientChanges[i], r) / this.curvatures[i];
      addScaledInPlace(r, this.steps[i], alphas[i] - beta);
    }
    return scale(r, -1);
  }
}
