// Original file: proto/renyibound/v1/decoy.proto


export interface DecoySweepPoint {
  'distanceKm'?: (number | string);
  'ratePerPulse'?: (number | string);
  'status'?: (string);
  'singlePhotonYieldLower'?: (number | string);
  'singlePhotonErrorUpper'?: (number | string);
  'rateLower95'?: (number | string);
  'rateUpper95'?: (number | string);
  '_ratePerPulse'?: "ratePerPulse";
  '_rateLower95'?: "rateLower95";
  '_rateUpper95'?: "rateUpper95";
}

export interface DecoySweepPoint__Output {
  'distanceKm': (number);
  'ratePerPulse'?: (number);
  'status': (string);
  'singlePhotonYieldLower': (number);
  'singlePhotonErrorUpper': (number);
  'rateLower95'?: (number);
  'rateUpper95'?: (number);
  '_ratePerPulse'?: "ratePerPulse";
  '_rateLower95'?: "rateLower95";
  '_rateUpper95'?: "rateUpper95";
}
