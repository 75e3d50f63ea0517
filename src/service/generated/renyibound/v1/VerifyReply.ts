// Original file: proto/renyibound/v1/service.proto


export interface VerifyReply {
  'valid'?: (boolean);
  'certifiedLowerBound'?: (number | string);
  'reason'?: (string);
  '_certifiedLowerBound'?: "certifiedLowerBound";
}

export interface VerifyReply__Output {
  'valid': (boolean);
  'certifiedLowerBound'?: (number);
  'reason': (string);
  '_certifiedLowerBound'?: "certifiedLowerBound";
}
