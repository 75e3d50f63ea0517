// Original file: proto/renyibound/v1/examples.proto

import type { ExampleInfo as _renyibound_v1_ExampleInfo, ExampleInfo__Output as _renyibound_v1_ExampleInfo__Output } from '../../renyibound/v1/ExampleInfo.js';

export interface ListExamplesReply {
  'examples'?: (_renyibound_v1_ExampleInfo)[];
}

export interface ListExamplesReply__Output {
  'examples': (_renyibound_v1_ExampleInfo__Output)[];
}
