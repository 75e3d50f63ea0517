// Original file: proto/renyibound/v1/decoy.proto


export interface DecoyProtocol {
  'signal'?: (number | string);
  'decoys'?: (number | string)[];
  'zBasisProbability'?: (number | string);
  'ecEfficiency'?: (number | string);
}

export interface DecoyProtocol__Output {
  'signal': (number);
  'decoys': (number)[];
  'zBasisProbability': (number);
  'ecEfficiency': (number);
}
