// Original file: proto/renyibound/v1/problem.proto

import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';

export interface LinearConstraint {
  'label'?: (string);
  'operator'?: (_renyibound_v1_Matrix | null);
  'lower'?: (number | string);
  'upper'?: (number | string);
  '_lower'?: "lower";
  '_upper'?: "upper";
}

export interface LinearConstraint__Output {
  'label': (string);
  'operator': (_renyibound_v1_Matrix__Output | null);
  'lower'?: (number);
  'upper'?: (number);
  '_lower'?: "lower";
  '_upper'?: "upper";
}
