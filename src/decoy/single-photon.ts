// The single-photon rounds of decoy-state BB84 as a problem for the entropy solver: the source-replacement
// state of src/protocols/bb84-prepare-measure.ts, constrained only by the decoy intervals (docs/decoy.md,
// "Single-photon problem").
import { ComplexMatrix, add, kron } from '../linear-algebra/complex-matrix.js';
import { matrixToJson, type LinearConstraintJson, type ProblemJson } from '../problem/json.js';
import { SENT_STATES, sendingProbabilities } from '../protocols/bb84-prepare-measure.js';
import { buildExample } from '../protocols/index.js';
import { projectorOnto } from '../protocols/operators.js';
import type { Basis, BasisBounds } from './bounds.js';
import type { EntropyRequest } from '../problem/model.js';
import { UNIT_ROUNDOFF } from '../linear-algebra/rounding.js';

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
 * The power of two s ≤ 1 by which the problem's yields and error yields are divided, so that the click block of the
 * optimum has trace in (1/4, 1/2] instead of ≈ Y₁ (docs/decoy.md, "Scaling of the single-photon problem"). Exact:
 * every feasible click block σ of trace ≤ 1/2 has σ_A ≤ ρ_A, and the objective depends on the click block alone
 * (see unscaledBound for how the value maps back).
 */
export function yieldScale(bounds: Record<Basis, Pick<BasisBounds, 'yieldUpper'>>): number {
  const largestYield = Math.max(bounds.Z.yieldUpper, bounds.X.yieldUpper);
  if (!(largestYield > 0)) return 1;
  let scale = 2 ** Math.ceil(Math.log2(2 * largestYield));
  while (scale < 2 * largestYield) scale *= 2; // log2 may round down just above a power of two
  return Math.min(1, scale);
}

/** Kinds whose value on the original problem follows exactly from the scaled one (the sandwiched-up kind does not). */
export function scalesExactly(request: EntropyRequest): boolean {
  return request.kind === 'von-neumann' || request.kind === 'petz-up' || request.kind === 'petz-down';
}

/** Relative allowance for the few roundings of the Petz transform in unscaledBound (its condition number is ≈ 1). */
const TRANSFORM_ROUNDINGS = 64;

/**
 * A lower (or upper) bound v on the scaled problem's minimum → one on the original problem's (docs/decoy.md,
 * "Scaling"). von Neumann is homogeneous: s·v, exact for a power of two. The Petz kinds are c·log₂ S with c < 0
 * (c = α/(1−α) up, 1/(1−α) down) and S = Q_key(σ) + Tr(no-key output) = Q_key(σ) + 1 − T_key(σ), both terms
 * homogeneous in the click block σ, so S_original = 1 + s·(S_scaled − 1): the map v ↦ c·log₂(1 + s(2^{v/c} − 1)) is
 * increasing and sends the scaled minimum to the original one. Its roundings are paid by a relative allowance.
 */
export function unscaledBound(request: EntropyRequest, value: number, scale: number, side: 'lower' | 'upper' = 'lower'): number {
  if (scale === 1) return value;
  if (request.kind === 'von-neumann') return scale * value;
  if (!scalesExactly(request)) throw new RangeError(`${request.kind} has no exact scaling`);
  const alpha = request.alpha as number;
  const c = request.kind === 'petz-up' ? alpha / (1 - alpha) : 1 / (1 - alpha);
  const mapped = (c * Math.log1p(scale * Math.expm1((value / c) * Math.LN2))) / Math.LN2;
  const allowance = TRANSFORM_ROUNDINGS * UNIT_ROUNDOFF * Math.abs(mapped);
  return side === 'lower' ? mapped - allowance : mapped + allowance;
}

/**
 * The problem: ρ_AB with ρ_A fixed by the source, Tr[(P_b ⊗ Π_click)ρ] ∈ p_b·[Y₁ᴸ, Y₁ᵁ]/s and
 * Tr[(error_b)ρ] ∈ p_b·[(e₁Y₁)ᴸ, (e₁Y₁)ᵁ]/s in both bases; key branch "Z sent, Z measured, click".
 * With s = 1 its value is the entropy per single-photon pulse (the key-branch probability p_Z²Y₁ included); with
 * a scale s from yieldScale, unscaledBound maps its value back. s must be a power of two (exact division).
 */
export function singlePhotonProblem(bounds: Record<Basis, Omit<BasisBounds, 'certificates'>>, zBasisProbability: number, scale = 1): ProblemJson {
  if (!(scale > 0 && scale <= 1 && Number.isInteger(Math.log2(scale)))) throw new RangeError(`yield scale must be a power of two in (0, 1] (got ${scale})`);
  if (scale < 1 && 2 * Math.max(bounds.Z.yieldUpper, bounds.X.yieldUpper) > scale) {
    throw new RangeError(`yield scale ${scale} is below twice the largest single-photon yield: the scaled problem would not be exact`);
  }
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
      lower: (p * b.yieldLower) / scale,
      upper: (p * b.yieldUpper) / scale,
    });
    constraints.push({
      label: `single-photon error yield, basis ${basis}`,
      operator: matrixToJson(errorOperator(basis)),
      lower: (p * b.errorYieldLower) / scale,
      upper: (p * b.errorYieldUpper) / scale,
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
    description:
      `decoy-state BB84 single-photon rounds, Z-basis probability ${zBasisProbability}; ` +
      (scale === 1 ? 'value per single-photon pulse' : `yields divided by ${scale} (the value maps back to the single-photon pulse exactly)`),
  };
}
