// Original file: proto/renyibound/v1/service.proto


export interface InfeasibilityCertificate {
  'multipliersLower'?: (number | string)[];
  'multipliersUpper'?: (number | string)[];
  'violation'?: (number | string);
  'dominantConstraints'?: (string)[];
}

export interface InfeasibilityCertificate__Output {
  'multipliersLower': (number)[];
  'multipliersUpper': (number)[];
  'violation': (number);
  'dominantConstraints': (string)[];
}
