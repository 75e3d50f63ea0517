// Original file: proto/renyibound/v1/problem.proto


export interface FaceExposure {
  'multipliers'?: (number | string)[];
}

export interface FaceExposure__Output {
  'multipliers': (number)[];
}
