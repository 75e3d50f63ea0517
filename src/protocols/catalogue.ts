// The example builders as data (names, parameters, defaults, ranges): what `example --list` prints and the
// ListExamples rpc returns, in the protobuf JSON shape of renyibound.v1.ListExamplesReply.
import { EXAMPLES } from './index.js';

export interface ExampleCatalogue {
  examples: Array<{
    name: string;
    description: string;
    parameters: Array<{ name: string; description: string; defaultValue: number; minimum: number; maximum: number }>;
  }>;
}

/** Read from the registered ExampleDefinitions, so a parameter added to a builder shows up here by itself. */
export function exampleCatalogue(): ExampleCatalogue {
  return {
    examples: Object.values(EXAMPLES).map((example) => ({
      name: example.name,
      description: example.description,
      parameters: example.parameters.map((p) => ({
        name: p.name,
        description: p.description,
        defaultValue: p.defaultValue,
        minimum: p.minimum,
        maximum: p.maximum,
      })),
    })),
  };
}
