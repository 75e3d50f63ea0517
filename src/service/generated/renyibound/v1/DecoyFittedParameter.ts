// Original file: proto/renyibound/v1/decoy.proto


export interface DecoyFittedParameter {
  'name'?: (string);
  'value'?: (number | string);
  'standardError'?: (number | string);
  'lower95'?: (number | string);
  'upper95'?: (number | string);
  'fixed'?: (boolean);
}

export interface DecoyFittedParameter__Output {
  'name': (string);
  'value': (number);
  'standardError': (number);
  'lower95': (number);
  'upper95': (number);
  'fixed': (boolean);
}
