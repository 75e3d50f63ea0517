// The bound that holds for every state, feasible or not.
import type { Problem } from '../problem/model.js';

/**
 * −max_c f(c), and 0 without scores. The key register is classical after the key map, and a classical register has
 * a non-negative conditional entropy of every kind served here (von Neumann and the Petz and sandwiched Rényi
 * entropies for α ∈ (1, 2]; common practice, see Tomamichel, "Quantum Information Processing with Finite
 * Resources", 2016, §5). Scores weight the branches by w_c = 2^{((α−1)/α)·f(c)} (Petz-down: 2^{(α−1)·f(c)}) or
 * subtract Σ f(c)·Tr X_c (von Neumann); replacing every f(c) by max f can only lower the value, and a constant
 * score k shifts every kind by exactly −k.
 */
export function trivialLowerBound(problem: Problem): number {
  const highest = problem.branches.reduce((m, b) => Math.max(m, b.score), -Infinity);
  return highest === 0 ? 0 : -highest;
}
