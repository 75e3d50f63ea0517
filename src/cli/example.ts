// `renyi-bound example <name> [--param value ...]`: prints an example problem as protobuf JSON;
// `renyi-bound example --list`: every builder with its parameters, defaults and ranges.
import type { Command } from './command-line.js';
import { ValidationError } from '../problem/errors.js';
import { exampleCatalogue } from '../protocols/catalogue.js';
import { EXAMPLES, buildExample } from '../protocols/index.js';
import { parseNumberOption, printJson, withInputErrors } from './io.js';

/** Every parameter name across the examples, with its meaning and default in each example that takes it. */
function parameterIndex(): Map<string, string[]> {
  const index = new Map<string, string[]>();
  for (const example of Object.values(EXAMPLES)) {
    for (const p of example.parameters) {
      const uses = index.get(p.name) ?? [];
      uses.push(`${example.name}: ${p.description} (default ${p.defaultValue})`);
      index.set(p.name, uses);
    }
  }
  return index;
}

function camelCase(name: string): string {
  return name.replace(/-([a-z])/g, (_, c: string) => c.toUpperCase());
}

export function register(program: Command): void {
  const command = program
    .command('example')
    .description('print an example problem as JSON, or with --list every example with its parameters')
    .argument('[name]', `example name: ${Object.keys(EXAMPLES).join(', ')}`)
    .option('--list', 'print every example builder with its parameters, defaults and ranges as JSON');
  const parameters = parameterIndex();
  for (const [name, uses] of parameters) command.option(`--${name} <value>`, uses.join('; '));
  command.action(
    withInputErrors((name: string | undefined, options: Record<string, string | boolean | undefined>) => {
      if (options.list === true) {
        if (name !== undefined) throw new ValidationError('--list', 'takes no example name');
        printJson(exampleCatalogue());
        return;
      }
      if (name === undefined) throw new ValidationError('name', 'is required (or give --list to see every example)');
      const values: Record<string, number> = {};
      for (const parameter of parameters.keys()) {
        const text = options[camelCase(parameter)];
        if (typeof text === 'string') values[parameter] = parseNumberOption(text, parameter);
      }
      printJson(buildExample(name, values));
    }),
  );
}
