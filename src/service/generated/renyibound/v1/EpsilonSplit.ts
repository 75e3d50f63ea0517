// Original file: proto/renyibound/v1/key_length.proto


export interface EpsilonSplit {
  'secrecy'?: (number | string);
  'privacyAmplification'?: (number | string);
  'errorVerification'?: (number | string);
  'completeness'?: (number | string);
}

export interface EpsilonSplit__Output {
  'secrecy': (number);
  'privacyAmplification': (number);
  'errorVerification': (number);
  'completeness': (number);
}
