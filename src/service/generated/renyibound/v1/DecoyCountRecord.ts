// Original file: proto/renyibound/v1/decoy.proto


export interface DecoyCountRecord {
  'intensity'?: (number | string);
  'basis'?: (string);
  'pulses'?: (number | string);
  'detections'?: (number | string);
  'errors'?: (number | string);
}

export interface DecoyCountRecord__Output {
  'intensity': (number);
  'basis': (string);
  'pulses': (number);
  'detections': (number);
  'errors': (number);
}
