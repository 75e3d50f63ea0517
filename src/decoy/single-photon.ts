// The single-photon rounds of decoy-state BB84 as a problem for the entropy solver: the source-replacement
// state of src/protocols/bb84-prepare-measure.ts, constrained only by the decoy intervals (docs/decoy.md,
// "Single-photon problem").
import { ComplexMatrix, add, kron } from '../linear-algebra/complex-matrix.js';
import { matrixToJson, type LinearConstraintJson, type ProblemJson } from '../problem/json.js';
import { SENT_STATES, sendingProbabilities } from '../protocols/bb84-prepare-measure.js';
import { buildExample } from '../protocols/index.js';
import { projectorOnto } from '../protocols/operators.js';
import type { Basis, BasisBounds } from './bounds.js';

/** Alice's register entries of a basis: |0⟩,|1⟩ for Z and |+⟩,|−⟩ for X. */
const REGISTER: Record<Basis, readonly [number, number]> = { Z: [0, 1], X: [2, 3] };

/** A qubit vector in Bob's single-photon system: the qubit plus a vacuum level (index 2) for "no click". */
function padded(vector: readonly number[]): number[] {
  return [vector[0], vector[1], 0];
}

/** Σ_{i∈b} |i⟩⟨i|_A ⊗ Π_click: Alice sent basis b and Bob clicked. */
function detectionOperator(basis: Basis): ComplexMatrix {
  const register = new ComplexMatrix(4, 4);
  for (const i of REGISTER[basis]) register.re[i * 4 + i] = 1;
  return kron(register, add(projectorOnto([1, 0, 0]), projectorOnto([0, 1, 0])));
}

/** Σ_{i∈b} |i⟩⟨i|_A ⊗ |φ_ī⟩⟨φ_ī|: Alice sent basis b, Bob measured b and found the other bit. */
function errorOperator(basis: Basis): ComplexMatrix {
  const [first, second] = REGISTER[basis];
  let total: ComplexMatrix | undefined;
  for (const [sent, wrong] of [
    [first, second],
    [second, first],
  ]) {
    const term = kron(projectorOnto([0, 1, 2, 3].map((k) => (k === sent ? 1 : 0))), projectorOnto(padded(SENT_STATES[wrong])));
    total = total === undefined ? term : add(total, term);
  }
  return total!;
}

/**
 * The problem: ρ_AB with ρ_A fixed by the source, Tr[(P_b ⊗ Π_click)ρ] ∈ p_b·[Y₁ᴸ, Y₁ᵁ] and
 * Tr[(error_b)ρ] ∈ p_b·[(e₁Y₁)ᴸ, (e₁Y₁)ᵁ] in both bases; key branch "Z sent, Z measured, click".
 * Its value is the entropy per single-photon pulse (the key-branch probability p_Z²Y₁ included).
 */
export function singlePhotonProblem(bounds: Record<Basis, BasisBounds>, zBasisProbability: number): ProblemJson {
  const sending = sendingProbabilities(zBasisProbability);
  const basisProbability: Record<Basis, number> = { Z: sending[0] + sending[1], X: sending[2] + sending[3] };
  const constraints: LinearConstraintJson[] = [];
  for (const basis of ['Z', 'X'] as const) {
    const p = basisProbability[basis];
    if (p === 0) continue;
    const b = bounds[basis];
    constraints.push({
      label: `single-photon yield, basis ${basis}`,
      operator: matrixToJson(detectionOperator(basis)),
      lower: p * b.yieldLower,
      upper: p * b.yieldUpper,
    });
    constraints.push({
      label: `single-photon error yield, basis ${basis}`,
      operator: matrixToJson(errorOperator(basis)),
      lower: p * b.errorYieldLower,
      upper: p * b.errorYieldUpper,
    });
  }
  // Source marginal, Bob's qubit + vacuum and the key/no-key branches are those of the lossy single-photon
  // builder; its joint table (a channel model) is replaced by the decoy intervals alone.
  const { sourceMarginal, branches, dimensionA, dimensionB } = buildExample('bb84-prepare-measure', {
    transmittance: 0.5,
    'z-basis-probability': zBasisProbability,
  });
  return {
    dimensionA,
    dimensionB,
    sourceMarginal,
    constraints,
    branches,
    description: `decoy-state BB84 single-photon rounds, Z-basis probability ${zBasisProbability}; value per single-photon pulse`,
  };
}
