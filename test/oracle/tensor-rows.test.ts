import { Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { ComplexMatrix, kron, partialTraceB } from '../../src/linear-algebra/complex-matrix.js';
import { LinearOracle, type OracleConstraint } from '../../src/oracle/index.js';
import { applyTensorLeft, commonTensorFactors, tensorFactors } from '../../src/oracle/tensor-rows.js';
import { randomDensity, randomHermitian, seededRandom } from '../helpers/random.js';
import { referenceEigenvalues, traceOfProduct } from './reference.js';

function realPart(a: ComplexMatrix): Matrix {
  return new Matrix(Array.from({ length: a.rows }, (_, i) => Array.from(a.re.subarray(i * a.cols, (i + 1) * a.cols))));
}
function imaginaryPart(a: ComplexMatrix): Matrix {
  return new Matrix(Array.from({ length: a.rows }, (_, i) => Array.from(a.im.subarray(i * a.cols, (i + 1) * a.cols))));
}

/** A Hermitian basis of the operators on C^a: E_ii, E_ij + E_ji and −iE_ij + iE_ji. */
function hermitianBasis(a: number): ComplexMatrix[] {
  const out: ComplexMatrix[] = [];
  for (let i = 0; i < a; i++) {
    for (let j = i; j < a; j++) {
      const s = new ComplexMatrix(a, a);
      s.re[i * a + j] = 1;
      s.re[j * a + i] = 1;
      out.push(s);
      if (i === j) continue;
      const t = new ComplexMatrix(a, a);
      t.im[i * a + j] = -1;
      t.im[j * a + i] = 1;
      out.push(t);
    }
  }
  return out;
}

/** Alice's marginal fixed (basis ⊗ 1_B), plus interval constraints P ⊗ Q around ρ (all tensor products). */
function productConstraints(a: number, b: number, seed: number): { constraints: OracleConstraint[]; marginal: ComplexMatrix } {
  const rng = seededRandom(seed);
  const rho = randomDensity(a * b, rng);
  const marginal = partialTraceB(rho, a, b);
  const constraints: OracleConstraint[] = hermitianBasis(a).map((e, k) => {
    const operator = kron(e, ComplexMatrix.identity(b));
    const value = traceOfProduct(operator, rho);
    return { label: `marginal-${k}`, operator, lower: value, upper: value };
  });
  for (let k = 0; k < 6; k++) {
    const operator = kron(randomHermitian(a, rng), randomHermitian(b, rng));
    const value = traceOfProduct(operator, rho);
    constraints.push({ label: `table-${k}`, operator, lower: value - 0.05, upper: value + 0.05 });
  }
  return { constraints, marginal };
}

describe('tensor-product constraint rows', () => {
  it('recovers P ⊗ Q (ml-matrix kroneckerProduct as reference) and rejects a generic operator', () => {
    const rng = seededRandom(3);
    const p = randomHermitian(3, rng);
    const q = randomHermitian(4, rng);
    const product = kron(p, q);
    const f = tensorFactors(product.re, product.im, 3, 4);
    expect(f).not.toBeNull();
    const rebuilt = kron(
      new ComplexMatrix(3, 3, f!.leftRe, f!.leftIm),
      new ComplexMatrix(4, 4, f!.rightRe, f!.rightIm),
    );
    // Reference for the real part: Re(P⊗Q) = Re P ⊗ Re Q − Im P ⊗ Im Q from ml-matrix's Kronecker product.
    const reference = realPart(p).kroneckerProduct(realPart(q)).sub(imaginaryPart(p).kroneckerProduct(imaginaryPart(q)));
    for (let t = 0; t < 144; t++) expect(Math.abs(rebuilt.re[t] - reference.get(Math.floor(t / 12), t % 12))).toBeLessThan(1e-13);
    const generic = randomHermitian(12, rng);
    expect(tensorFactors(generic.re, generic.im, 3, 4)).toBeNull();
    expect(commonTensorFactors([product, generic], 12)).toBeNull();
    expect(commonTensorFactors([product], 12)?.a).toBe(3);
  });

  it('(P ⊗ Q)·Y agrees with ml-matrix (Kronecker product and matrix product, complex parts expanded)', () => {
    const rng = seededRandom(8);
    // Dense factors of odd and even sizes (the 2×2 blocked dot products) and identity factors (the sparse row updates).
    const cases = [
      { p: randomHermitian(2, rng), q: randomHermitian(5, rng) },
      { p: randomHermitian(3, rng), q: ComplexMatrix.identity(4) },
      { p: ComplexMatrix.identity(4), q: randomHermitian(3, rng) },
      { p: randomHermitian(5, rng), q: randomHermitian(3, rng) },
    ];
    for (const { p, q } of cases) {
      const a = p.rows;
      const b = q.rows;
      const n = a * b;
      const y = randomHermitian(n, rng);
      const product = kron(p, q);
      const f = tensorFactors(product.re, product.im, a, b)!;
      const outRe = new Float64Array(n * n);
      const outIm = new Float64Array(n * n);
      applyTensorLeft(f, a, b, y.re, y.im, new Float64Array(n * n), new Float64Array(n * n), outRe, outIm);
      const kr = realPart(p).kroneckerProduct(realPart(q)).sub(imaginaryPart(p).kroneckerProduct(imaginaryPart(q)));
      const ki = realPart(p).kroneckerProduct(imaginaryPart(q)).add(imaginaryPart(p).kroneckerProduct(realPart(q)));
      const re = kr.mmul(realPart(y)).sub(ki.mmul(imaginaryPart(y)));
      const im = kr.mmul(imaginaryPart(y)).add(ki.mmul(realPart(y)));
      for (let t = 0; t < n * n; t++) {
        expect(Math.abs(outRe[t] - re.get(Math.floor(t / n), t % n))).toBeLessThan(1e-12);
        expect(Math.abs(outIm[t] - im.get(Math.floor(t / n), t % n))).toBeLessThan(1e-12);
      }
    }
  });

  it('minimize with the marginal fixed: Tr(G_A ρ_A) + λ_min(H_B) (mathjs eigenvalues), tensor and dense paths alike', () => {
    const a = 6;
    const b = 6;
    const { constraints, marginal } = productConstraints(a, b, 21);
    // Only the marginal (drop the table intervals): min over σ with σ_A fixed of ⟨G_A ⊗ 1 + 1 ⊗ H_B, σ⟩ is
    // Tr(G_A σ_A) + λ_min(H_B), attained by σ_A ⊗ |φ⟩⟨φ| (an identity of the partial trace).
    const marginalOnly = constraints.filter((c) => c.label.startsWith('marginal'));
    const rng = seededRandom(4);
    const gA = randomHermitian(a, rng);
    const hB = randomHermitian(b, rng);
    const G = kron(gA, ComplexMatrix.identity(b));
    const second = kron(ComplexMatrix.identity(a), hB);
    for (let t = 0; t < G.re.length; t++) {
      G.re[t] += second.re[t];
      G.im[t] += second.im[t];
    }
    const expected = traceOfProduct(gA, marginal) + referenceEigenvalues(hB)[0];
    const tensor = new LinearOracle(a * b, marginalOnly);
    const dense = new LinearOracle(a * b, marginalOnly, { tensorStructure: false });
    expect(tensor.schurAssembly).toBe('tensor');
    expect(dense.schurAssembly).toBe('dense');
    for (const oracle of [tensor, dense]) {
      const result = oracle.minimize(G);
      expect(result.status).toBe('OPTIMAL');
      expect(Math.abs(result.primalValue - expected)).toBeLessThan(1e-6 * (1 + Math.abs(expected)));
      expect(result.dualBound).toBeLessThanOrEqual(expected + 1e-9);
    }
  });

  it('with interval tables too, both paths reach the same optimum and the dual bound stays below it', () => {
    const { constraints } = productConstraints(6, 6, 5);
    const G = randomHermitian(36, seededRandom(9));
    const tensor = new LinearOracle(36, constraints);
    const dense = new LinearOracle(36, constraints, { tensorStructure: false });
    expect(tensor.schurAssembly).toBe('tensor');
    const t = tensor.minimize(G);
    const d = dense.minimize(G);
    expect(t.status).toBe('OPTIMAL');
    expect(d.status).toBe('OPTIMAL');
    expect(Math.abs(t.primalValue - d.primalValue)).toBeLessThan(2e-7 * (1 + Math.abs(d.primalValue)));
    // Weak duality across paths: each path's certified bound lies below the other's primal value.
    expect(t.dualBound).toBeLessThanOrEqual(d.primalValue + 1e-12);
    expect(d.dualBound).toBeLessThanOrEqual(t.primalValue + 1e-12);
  });

  it('falls back to dense products when one operator is not a tensor product', () => {
    const { constraints } = productConstraints(6, 6, 7);
    const rng = seededRandom(12);
    const generic = randomHermitian(36, rng);
    const rho = randomDensity(36, rng);
    const value = traceOfProduct(generic, rho);
    const oracle = new LinearOracle(36, [...constraints.slice(0, 3), { label: 'generic', operator: generic, lower: value - 1, upper: value + 1 }]);
    expect(oracle.schurAssembly).toBe('dense');
  });
});
