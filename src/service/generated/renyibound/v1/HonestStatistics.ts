// Original file: proto/renyibound/v1/problem.proto


export interface HonestStatistics {
  'branchProbabilities'?: (number | string)[];
  'errorCorrectionEntropy'?: (number | string)[];
}

export interface HonestStatistics__Output {
  'branchProbabilities': (number)[];
  'errorCorrectionEntropy': (number)[];
}
