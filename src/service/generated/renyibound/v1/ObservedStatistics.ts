// Original file: proto/renyibound/v1/problem.proto

import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';

export interface ObservedStatistics {
  'label'?: (string);
  'povmA'?: (_renyibound_v1_Matrix)[];
  'povmB'?: (_renyibound_v1_Matrix)[];
  'probabilities'?: (number | string)[];
  'tolerance'?: (number | string);
}

export interface ObservedStatistics__Output {
  'label': (string);
  'povmA': (_renyibound_v1_Matrix__Output)[];
  'povmB': (_renyibound_v1_Matrix__Output)[];
  'probabilities': (number)[];
  'tolerance': (number);
}
