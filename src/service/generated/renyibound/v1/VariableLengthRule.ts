// Original file: proto/renyibound/v1/key_length.proto


export interface VariableLengthRule {
  'intercept'?: (number | string);
  'keyLengthAtHonestMean'?: (number | string);
}

export interface VariableLengthRule__Output {
  'intercept': (number);
  'keyLengthAtHonestMean': (number);
}
