// Builds example problems through the public builder + validation path, as a user's JSON would go.
import { buildExample } from '../../src/protocols/index.js';
import { problemFromJson } from '../../src/problem/validate.js';
import type { EntropyRequest, Problem } from '../../src/problem/model.js';

/** Every entropy kind, the Rényi ones at α = 1.5. */
export const KINDS_AT_ONE_AND_A_HALF: readonly EntropyRequest[] = [
  { kind: 'von-neumann' },
  { kind: 'petz-up', alpha: 1.5 },
  { kind: 'petz-down', alpha: 1.5 },
  { kind: 'sandwiched-up', alpha: 1.5 },
];

export function example(name: string, params: Record<string, number> = {}): Problem {
  return problemFromJson(buildExample(name, params));
}

/** Device-independent CHSH bound 1 − h((1 + √((S/2)² − 1))/2), S = 8w − 4 (Acín et al., PRL 98, 230501, 2007). */
export function deviceIndependentBound(winProbability: number): number {
  const s = 8 * winProbability - 4;
  const p = (1 + Math.sqrt((s / 2) ** 2 - 1)) / 2;
  return 1 - (-p * Math.log2(p) - (1 - p) * Math.log2(1 - p));
}
