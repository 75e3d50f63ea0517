// Original file: proto/renyibound/v1/examples.proto

import type { ExampleParameterInfo as _renyibound_v1_ExampleParameterInfo, ExampleParameterInfo__Output as _renyibound_v1_ExampleParameterInfo__Output } from '../../renyibound/v1/ExampleParameterInfo.js';

export interface ExampleInfo {
  'name'?: (string);
  'description'?: (string);
  'parameters'?: (_renyibound_v1_ExampleParameterInfo)[];
}

export interface ExampleInfo__Output {
  'name': (string);
  'description': (string);
  'parameters': (_renyibound_v1_ExampleParameterInfo__Output)[];
}
