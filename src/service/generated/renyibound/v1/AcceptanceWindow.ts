// Original file: proto/renyibound/v1/key_length.proto


export interface AcceptanceWindow {
  'meanScore'?: (number | string);
  'deviation'?: (number | string);
  'minimumScoreSum'?: (number | string);
  'tail'?: (string);
}

export interface AcceptanceWindow__Output {
  'meanScore': (number);
  'deviation': (number);
  'minimumScoreSum': (number);
  'tail': (string);
}
