// Seeded random test data: reproducible generators for complex matrices, states and isometries.
import { ComplexMatrix } from '../../src/linear-algebra/complex-matrix.js';

/** A uniform generator on [0, 1) with 53 random bits. */
export type RandomSource = () => number;

/** Weyl-sequence increment of the splitmix32 generator (odd constant from the splitmix family). */
const SPLITMIX_INCREMENT = 0x9e3779b9;

/**
 * Deterministic uniform generator on [0, 1) (splitmix32; two 32-bit outputs make one 53-bit double).
 * Same seed ⇒ same sequence on every platform.
 */
export function seededRandom(seed: number): RandomSource {
  let state = (seed | 0) ^ 0x2545f491;
  const next32 = (): number => {
    state = (state + SPLITMIX_INCREMENT) | 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 16), 0x21f0aaad);
    z = Math.imul(z ^ (z >>> 15), 0x735a2d97);
    return (z ^ (z >>> 15)) >>> 0;
  };
  return () => {
    const high = next32() >>> 5; // 27 bits
    const low = next32() >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992;
  };
}

/** Standard normal sample (Box–Muller; 1 − u keeps the logarithm finite). */
export function randomGaussian(rng: RandomSource): number {
  const u = 1 - rng();
  const v = rng();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

/** rows×cols matrix of independent complex Gaussians (real and imaginary parts N(0, 1/2)). */
export function randomComplexGaussian(rows: number, cols: number, rng: RandomSource): ComplexMatrix {
  const m = new ComplexMatrix(rows, cols);
  for (let k = 0; k < rows * cols; k++) {
    m.re[k] = randomGaussian(rng) * Math.SQRT1_2;
    m.im[k] = randomGaussian(rng) * Math.SQRT1_2;
  }
  return m;
}

/** Random Hermitian n×n matrix (G + G†)/2 with complex Gaussian G (a GUE-type sample). */
export function randomHermitian(n: number, rng: RandomSource): ComplexMatrix {
  const g = randomComplexGaussian(n, n, rng);
  const h = new ComplexMatrix(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      h.re[i * n + j] = 0.5 * (g.re[i * n + j] + g.re[j * n + i]);
      h.im[i * n + j] = 0.5 * (g.im[i * n + j] - g.im[j * n + i]);
    }
  }
  return h;
}

/**
 * Random density operator G·G†/Tr(G·G†) with G an n×rank complex Gaussian matrix.
 * Full rank (almost surely) by default; `rank < n` gives a rank-deficient state.
 */
export function randomDensity(n: number, rng: RandomSource, rank: number = n): ComplexMatrix {
  if (!Number.isInteger(rank) || rank < 1 || rank > n) throw new RangeError(`randomDensity: rank ${rank} not in 1..${n}`);
  const g = randomComplexGaussian(n, rank, rng);
  const rho = new ComplexMatrix(n, n);
  let tr = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < rank; k++) {
        const ar = g.re[i * rank + k];
        const ai = g.im[i * rank + k];
        const br = g.re[j * rank + k];
        const bi = -g.im[j * rank + k];
        sr += ar * br - ai * bi;
        si += ar * bi + ai * br;
      }
      rho.re[i * n + j] = sr;
      rho.im[i * n + j] = si;
      rho.re[j * n + i] = sr;
      rho.im[j * n + i] = -si;
    }
    tr += rho.re[i * n + i];
  }
  for (let k = 0; k < n * n; k++) {
    rho.re[k] /= tr;
    rho.im[k] /= tr;
  }
  for (let i = 0; i < n; i++) rho.im[i * n + i] = 0;
  return rho;
}

/**
 * Random isometry V (rows×cols, cols ≤ rows, V†V = 1): Haar-type columns from modified Gram–Schmidt
 * (applied twice for orthogonality to rounding level) on a complex Gaussian matrix.
 */
export function randomIsometry(rows: number, cols: number, rng: RandomSource): ComplexMatrix {
  if (cols > rows) throw new RangeError(`randomIsometry: ${cols} columns exceed ${rows} rows`);
  const v = randomComplexGaussian(rows, cols, rng);
  for (let j = 0; j < cols; j++) {
    for (let pass = 0; pass < 2; pass++) {
      for (let k = 0; k < j; k++) {
        // projection coefficient ⟨v_k, v_j⟩
        let pr = 0;
        let pi = 0;
        for (let i = 0; i < rows; i++) {
          const kr = v.re[i * cols + k];
          const ki = v.im[i * cols + k];
          const jr = v.re[i * cols + j];
          const ji = v.im[i * cols + j];
          pr += kr * jr + ki * ji;
          pi += kr * ji - ki * jr;
        }
        for (let i = 0; i < rows; i++) {
          const kr = v.re[i * cols + k];
          const ki = v.im[i * cols + k];
          v.re[i * cols + j] -= pr * kr - pi * ki;
          v.im[i * cols + j] -= pr * ki + pi * kr;
        }
      }
    }
    let norm = 0;
    for (let i = 0; i < rows; i++) norm += v.re[i * cols + j] ** 2 + v.im[i * cols + j] ** 2;
    norm = Math.sqrt(norm);
    for (let i = 0; i < rows; i++) {
      v.re[i * cols + j] /= norm;
      v.im[i * cols + j] /= norm;
    }
  }
  return v;
}

/** Random n×n unitary (a square random isometry). */
export function randomUnitary(n: number, rng: RandomSource): ComplexMatrix {
  return randomIsometry(n, n, rng);
}
