// The min-tradeoff function of a von Neumann result (docs/finite-size.md, "Min-tradeoff export"): the one the
// result states, or, for a result stored before results carried it, recomputed from its certificate as the
// verifier does.
import { minTradeoffFromBreakdown, hasMinTradeoff } from '../certificate/min-tradeoff.js';
import { verifyCertificate } from '../certificate/verify.js';
import type { Problem } from '../problem/model.js';
import type { MinTradeoffFunction, SolveResult } from '../result/types.js';

export function minTradeoffOf(problem: Problem, result: SolveResult): MinTradeoffFunction | null {
  if (result.minTradeoff) return result.minTradeoff;
  if (!result.certificate || !hasMinTradeoff(problem, result.entropy)) return null;
  const checked = verifyCertificate(problem, { kind: 'von-neumann' }, result.certificate);
  if (!checked.valid || !checked.breakdown || !checked.face) return null;
  return minTradeoffFromBreakdown(problem, checked.face, result.certificate, checked.breakdown);
}
