// Original file: proto/renyibound/v1/decoy.proto


export interface VerifyDecoyRateRequest {
  'answerJson'?: (string);
}

export interface VerifyDecoyRateRequest__Output {
  'answerJson': (string);
}
