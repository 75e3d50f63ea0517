// Original file: proto/renyibound/v1/examples.proto


export interface ExampleParameterInfo {
  'name'?: (string);
  'description'?: (string);
  'defaultValue'?: (number | string);
  'minimum'?: (number | string);
  'maximum'?: (number | string);
}

export interface ExampleParameterInfo__Output {
  'name': (string);
  'description': (string);
  'defaultValue': (number);
  'minimum': (number);
  'maximum': (number);
}
