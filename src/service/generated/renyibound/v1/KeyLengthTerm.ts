// Original file: proto/renyibound/v1/key_length.proto


export interface KeyLengthTerm {
  'name'?: (string);
  'bits'?: (number | string);
  'source'?: (string);
}

export interface KeyLengthTerm__Output {
  'name': (string);
  'bits': (number);
  'source': (string);
}
