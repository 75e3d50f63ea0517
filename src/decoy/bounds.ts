// Single-photon yield and error-yield intervals in each basis from the observed gains, each end an LP certified
// by its dual (docs/decoy.md, "Photon-number LP").
import highsLoader, { type Highs } from 'highs';
import { certifiedLpBound, errorRateUpper, photonLp, type CertifiedLpBound } from './photon-lp.js';

export type Basis = 'Z' | 'X';
export const BASES: readonly Basis[] = ['Z', 'X'];

/** What was seen at one intensity in one basis (sifted rounds: both parties chose that basis). */
export interface IntensityObservation {
  intensity: number;
  /** Q: fraction of pulses Bob detected. */
  gain: number;
  /** E·Q: fraction of pulses Bob detected with the wrong bit. */
  errorGain: number;
}

/** The photon-number cut-off used unless a caller asks for another (the tail above it is bounded exactly). */
export const DEFAULT_CUTOFF = 12;

export interface BasisBounds {
  /** Y₁ ∈ [yieldLower, yieldUpper]: probability that Bob detects a single-photon pulse. */
  yieldLower: number;
  yieldUpper: number;
  /** e₁Y₁ ∈ [errorYieldLower, errorYieldUpper]: probability of a detection with the wrong bit. */
  errorYieldLower: number;
  errorYieldUpper: number;
  /** e₁ ≤ errorYieldUpper / yieldLower (capped at 1; 1 when no single-photon detection is certified). */
  errorRateUpper: number;
  certificates: { yieldLower: CertifiedLpBound; yieldUpper: CertifiedLpBound; errorYieldLower: CertifiedLpBound; errorYieldUpper: CertifiedLpBound };
}

export class DecoyInfeasibleError extends Error {
  constructor(readonly basis: Basis, detail: string) {
    super(`basis ${basis}: ${detail}`);
    this.name = 'DecoyInfeasibleError';
  }
}

/** The four certified LPs of one basis. Lower ends are clipped at 0 and upper ends at 1 (the box of the LP). */
export function basisBounds(highs: Highs, basis: Basis, observations: readonly IntensityObservation[], cutoff = DEFAULT_CUTOFF): BasisBounds {
  const gains = observations.map((o) => ({ intensity: o.intensity, value: o.gain }));
  const errorGains = observations.map((o) => ({ intensity: o.intensity, value: o.errorGain }));
  const run = (rows: typeof gains, sense: 'min' | 'max') => {
    const bound = certifiedLpBound(highs, photonLp(rows, cutoff, 1, sense));
    if (bound.status !== 'CERTIFIED') throw new DecoyInfeasibleError(basis, bound.message ?? 'LP not solved');
    return bound;
  };
  const certificates = {
    yieldLower: run(gains, 'min'),
    yieldUpper: run(gains, 'max'),
    errorYieldLower: run(errorGains, 'min'),
    errorYieldUpper: run(errorGains, 'max'),
  };
  const yieldLower = Math.max(0, certificates.yieldLower.certifiedValue);
  const yieldUpper = Math.min(1, certificates.yieldUpper.certifiedValue);
  const errorYieldLower = Math.max(0, certificates.errorYieldLower.certifiedValue);
  const errorYieldUpper = Math.min(1, certificates.errorYieldUpper.certifiedValue);
  return {
    yieldLower,
    yieldUpper,
    errorYieldLower,
    errorYieldUpper,
    errorRateUpper: errorRateUpper(errorYieldUpper, yieldLower),
    certificates,
  };
}

let loading: Promise<Highs> | undefined;

/** HiGHS compiled to WebAssembly, loaded once per process. */
export function lpSolver(): Promise<Highs> {
  // The package's types describe its CommonJS build; under ESM the default export is the loader itself.
  const loader = ((highsLoader as unknown as { default?: unknown }).default ?? highsLoader) as () => Promise<Highs>;
  loading ??= loader();
  return loading;
}
