// Original file: proto/renyibound/v1/decoy.proto


export interface VerifyDecoyRateReply {
  'valid'?: (boolean);
  'reason'?: (string);
  'ratePerPulse'?: (number | string);
  'singlePhotonBound'?: (number | string);
  '_ratePerPulse'?: "ratePerPulse";
  '_singlePhotonBound'?: "singlePhotonBound";
}

export interface VerifyDecoyRateReply__Output {
  'valid': (boolean);
  'reason': (string);
  'ratePerPulse'?: (number);
  'singlePhotonBound'?: (number);
  '_ratePerPulse'?: "ratePerPulse";
  '_singlePhotonBound'?: "singlePhotonBound";
}
