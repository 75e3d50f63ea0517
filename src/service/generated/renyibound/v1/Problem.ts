// Original file: proto/renyibound/v1/problem.proto

import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';
import type { LinearConstraint as _renyibound_v1_LinearConstraint, LinearConstraint__Output as _renyibound_v1_LinearConstraint__Output } from '../../renyibound/v1/LinearConstraint.js';
import type { ObservedStatistics as _renyibound_v1_ObservedStatistics, ObservedStatistics__Output as _renyibound_v1_ObservedStatistics__Output } from '../../renyibound/v1/ObservedStatistics.js';
import type { AnnouncementBranch as _renyibound_v1_AnnouncementBranch, AnnouncementBranch__Output as _renyibound_v1_AnnouncementBranch__Output } from '../../renyibound/v1/AnnouncementBranch.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { HonestStatistics as _renyibound_v1_HonestStatistics, HonestStatistics__Output as _renyibound_v1_HonestStatistics__Output } from '../../renyibound/v1/HonestStatistics.js';

export interface Problem {
  'dimensionA'?: (number);
  'dimensionB'?: (number);
  'sourceMarginal'?: (_renyibound_v1_Matrix | null);
  'constraints'?: (_renyibound_v1_LinearConstraint)[];
  'observations'?: (_renyibound_v1_ObservedStatistics)[];
  'branches'?: (_renyibound_v1_AnnouncementBranch)[];
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'description'?: (string);
  'honestStatistics'?: (_renyibound_v1_HonestStatistics | null);
  '_alpha'?: "alpha";
}

export interface Problem__Output {
  'dimensionA': (number);
  'dimensionB': (number);
  'sourceMarginal': (_renyibound_v1_Matrix__Output | null);
  'constraints': (_renyibound_v1_LinearConstraint__Output)[];
  'observations': (_renyibound_v1_ObservedStatistics__Output)[];
  'branches': (_renyibound_v1_AnnouncementBranch__Output)[];
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'description': (string);
  'honestStatistics': (_renyibound_v1_HonestStatistics__Output | null);
  '_alpha'?: "alpha";
}
