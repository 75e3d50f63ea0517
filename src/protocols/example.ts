// The shape of an example builder: named numeric parameters with defaults and ranges, and a build function.
import type { ProblemJson } from '../problem/json.js';

export interface ExampleParameter {
  /** kebab-case name, as on the command line (--qber-z). */
  name: string;
  description: string;
  defaultValue: number;
  /** Inclusive range; builders do not judge physics, the range only keeps the numbers meaningful. */
  minimum: number;
  maximum: number;
}

export interface ExampleDefinition {
  name: string;
  description: string;
  parameters: ExampleParameter[];
  /** Builds the problem JSON from a complete, range-checked parameter set keyed by kebab-case names. */
  build(parameters: Record<string, number>): ProblemJson;
}
