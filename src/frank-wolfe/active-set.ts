import { addScaledInPlace, ComplexMatrix, scale, traceProductReal } from '../linear-algebra/complex-matrix.js';

interface Atom {
  point: ComplexMatrix;
  weight: number;
}

/** The iterate as a convex combination of feasible points, for pairwise (away-to-toward) steps. */
export class ActiveSet {
  private atoms: Atom[] = [];

  constructor(
    first: ComplexMatrix,
    private readonly maxAtoms: number,
    private readonly weightFloor: number,
  ) {
    this.atoms.push({ point: first, weight: 1 });
  }

  get size(): number {
    return this.atoms.length;
  }

  /** The atom with the largest ⟨G, a⟩: moving weight away from it decreases the linear model most. */
  awayAtom(gradient: ComplexMatrix): { index: number; weight: number; point: ComplexMatrix } {
    let index = 0;
    let worst = -Infinity;
    this.atoms.forEach((atom, i) => {
      const v = traceProductReal(gradient, atom.point);
      if (v > worst) {
        worst = v;
        index = i;
      }
    });
    return { index, weight: this.atoms[index].weight, point: this.atoms[index].point };
  }

  /** Moves `step` of weight from atom `awayIndex` to the new point. */
  pairwiseStep(awayIndex: number, toward: ComplexMatrix, step: number): void {
    const away = this.atoms[awayIndex];
    away.weight -= step;
    this.atoms.push({ point: toward, weight: step });
    this.atoms = this.atoms.filter((a) => a.weight > this.weightFloor);
    this.renormalise();
    if (this.atoms.length > this.maxAtoms) this.mergeLightest();
  }

  /** Replaces everything by one point (after a jump to a different iterate). */
  reset(point: ComplexMatrix): void {
    this.atoms = [{ point, weight: 1 }];
  }

  private renormalise(): void {
    const total = this.atoms.reduce((s, a) => s + a.weight, 0);
    for (const a of this.atoms) a.weight /= total;
  }

  /** The weighted mean of two feasible points is feasible, so merging keeps the iterate unchanged. */
  private mergeLightest(): void {
    this.atoms.sort((a, b) => a.weight - b.weight);
    const [a, b] = this.atoms;
    const weight = a.weight + b.weight;
    const point = scale(a.point, a.weight / weight);
    addScaledInPlace(point, b.point, b.weight / weight);
    this.atoms.splice(0, 2, { point, weight });
  }
}
