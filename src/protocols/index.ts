// The registry of example problems and the one entry point that builds them with checked parameters.
import type { ProblemJson } from '../problem/json.js';
import { ValidationError } from '../problem/errors.js';
import { bb84Entangled } from './bb84-entangled.js';
import { sixState } from './six-state.js';
import { chshTested } from './chsh-tested.js';
import { bb84PrepareMeasure } from './bb84-prepare-measure.js';
import type { ExampleDefinition } from './example.js';
import { requireInRange } from './operators.js';

export type { ExampleDefinition, ExampleParameter } from './example.js';

/** Every example, by name. */
export const EXAMPLES: Readonly<Record<string, ExampleDefinition>> = Object.freeze({
  [bb84Entangled.name]: bb84Entangled,
  [sixState.name]: sixState,
  [chshTested.name]: chshTested,
  [bb84PrepareMeasure.name]: bb84PrepareMeasure,
});

/** kebab-case form of a parameter name, so that camelCase keys (qberZ) work as well as qber-z. */
function kebabCase(name: string): string {
  return name.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);
}

/**
 * Builds the named example as protobuf-JSON. `params` holds numbers by parameter name (kebab-case as on the
 * command line, or camelCase); missing parameters take their defaults. Unknown names, unknown parameters and
 * out-of-range values are ValidationErrors naming the culprit.
 */
export function buildExample(name: string, params: Record<string, number> = {}): ProblemJson {
  const definition = Object.hasOwn(EXAMPLES, name) ? EXAMPLES[name] : undefined;
  if (definition === undefined) {
    throw new ValidationError('name', `unknown example ${JSON.stringify(name)} (expected one of ${Object.keys(EXAMPLES).join(', ')})`);
  }
  const known = definition.parameters.map((p) => p.name);
  const values: Record<string, number> = {};
  for (const p of definition.parameters) values[p.name] = p.defaultValue;
  for (const [key, value] of Object.entries(params)) {
    const parameter = kebabCase(key);
    if (!known.includes(parameter)) {
      throw new ValidationError(
        parameter,
        `unknown parameter for ${name} (expected ${known.length === 0 ? 'none' : known.join(', ')})`,
      );
    }
    values[parameter] = value;
  }
  for (const p of definition.parameters) requireInRange(p.name, values[p.name], p.minimum, p.maximum);
  return definition.build(values);
}
