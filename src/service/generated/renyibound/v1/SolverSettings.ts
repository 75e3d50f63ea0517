// Original file: proto/renyibound/v1/service.proto


export interface SolverSettings {
  'gapTolerance'?: (number | string);
  'maxIterations'?: (number);
  'timeLimitMs'?: (number);
}

export interface SolverSettings__Output {
  'gapTolerance': (number);
  'maxIterations': (number);
  'timeLimitMs': (number);
}
