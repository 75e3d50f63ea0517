// The key-length ledger: every term of ℓ on its own line with its source (docs/finite-size.md, "Key length").
// Pure arithmetic on numbers computed elsewhere; logs base 2.

export interface LedgerTerm {
  name: string;
  bits: number;
  source: string;
}

/** How the user's ε_sec is split between privacy amplification and error verification. */
export interface EpsilonSplit {
  secrecy: number;
  privacyAmplification: number;
  errorVerification: number;
  completeness: number;
}

export interface LedgerInput {
  rounds: number;
  alpha: number;
  /** Certified lower bound on h^f_α per round. */
  singleRoundBound: number;
  /** min over the acceptance window of the score sum (fixed length), or an observed score sum (variable length). */
  scoreSum: number;
  errorCorrectionBits: number;
  epsilons: EpsilonSplit;
}

export interface Ledger {
  keyLength: number;
  /** Σ of the terms before rounding down and clipping at 0. */
  unrounded: number;
  terms: LedgerTerm[];
}

/** ⌈log2(1/ε_EV)⌉: the verification hash length (common practice). */
export function errorVerificationBits(epsilon: number): number {
  return Math.ceil(Math.log2(1 / epsilon));
}

/** (α/(α−1))·log2(1/ε_PA): the Rényi privacy-amplification cost with secrecy ½‖·‖₁ ≤ ε_PA (the +2 is its own term). */
export function privacyAmplificationBits(alpha: number, epsilon: number): number {
  return (alpha / (alpha - 1)) * Math.log2(1 / epsilon);
}

/** Every term except the score sum (which fixed and variable length treat differently). */
function fixedTerms(input: Omit<LedgerInput, 'scoreSum'>): LedgerTerm[] {
  const { rounds, alpha, singleRoundBound, errorCorrectionBits, epsilons } = input;
  return [
    {
      name: 'single-round bound n·h^f_α',
      bits: rounds * singleRoundBound,
      source: 'certified score-weighted sandwiched Rényi bound of this run; generalised Rényi entropy accumulation (Arqand, Hahn, Tan, arXiv:2405.05912)',
    },
    {
      name: 'error correction λ_EC',
      bits: -errorCorrectionBits,
      source: 'f_EC·n·Σ_c p_c·H(S|B)_c from the honest statistics (common practice); H̃↑_α drops by at most the leaked bits (classical side information)',
    },
    {
      name: 'error verification ⌈log2(1/ε_EV)⌉',
      bits: -errorVerificationBits(epsilons.errorVerification),
      source: 'universal hash of the corrected key (common practice)',
    },
    {
      name: 'privacy amplification (α/(α−1))·log2(1/ε_PA)',
      bits: -privacyAmplificationBits(alpha, epsilons.privacyAmplification),
      source: 'Rényi privacy amplification, Dupuis, arXiv:2105.05342 (α ∈ (1, 2]), secrecy ½‖·‖₁ ≤ ε_PA',
    },
    {
      name: 'constant',
      bits: 2,
      source: 'prefactor 2^{2/α−1} of Dupuis’ bound (from memory; checked against exact hashing) with the ½‖·‖₁ convention (derived here, docs/finite-size.md §3, §8)',
    },
  ];
}

/** The fixed-length ledger: ℓ = ⌊n·h + min_Ω Σf − λ_EC − ⌈log 1/ε_EV⌉ − (α/(α−1))log 1/ε_PA + 2⌋, at least 0. */
export function keyLengthLedger(input: LedgerInput): Ledger {
  const [single, ...rest] = fixedTerms(input);
  const terms: LedgerTerm[] = [
    single,
    {
      name: 'score term min over Ω of Σ_j f(c_j)',
      bits: input.scoreSum,
      source: 'derived here: the accumulation bound adds the score sum; Ω keeps honest aborts ≤ ε_com (Cramér–Chernoff)',
    },
    ...rest,
  ];
  const unrounded = terms.reduce((acc, t) => acc + t.bits, 0);
  return { keyLength: Math.max(0, Math.floor(unrounded)), unrounded, terms };
}

/**
 * The variable-length rule ℓ(F) = max(0, ⌊F + intercept⌋) for an observed score sum F: every term but the score
 * term is fixed in advance (derived here: summing the privacy-amplification bound over outcomes cⁿ weighted by
 * 2^{κ(f(cⁿ) − ℓ(cⁿ))} reproduces the score-weighted entropy, so no union bound over outcomes is paid).
 */
export function variableLengthIntercept(input: Omit<LedgerInput, 'scoreSum'>): number {
  return fixedTerms(input).reduce((acc, t) => acc + t.bits, 0);
}
