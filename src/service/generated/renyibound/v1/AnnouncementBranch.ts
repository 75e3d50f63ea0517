// Original file: proto/renyibound/v1/problem.proto

import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';

export interface AnnouncementBranch {
  'label'?: (string);
  'krausOperators'?: (_renyibound_v1_Matrix)[];
  'keyProjectors'?: (_renyibound_v1_Matrix)[];
  'score'?: (number | string);
}

export interface AnnouncementBranch__Output {
  'label': (string);
  'krausOperators': (_renyibound_v1_Matrix__Output)[];
  'keyProjectors': (_renyibound_v1_Matrix__Output)[];
  'score': (number);
}
