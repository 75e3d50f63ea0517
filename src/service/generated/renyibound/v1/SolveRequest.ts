// Original file: proto/renyibound/v1/service.proto

import type { Problem as _renyibound_v1_Problem, Problem__Output as _renyibound_v1_Problem__Output } from '../../renyibound/v1/Problem.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { SolverSettings as _renyibound_v1_SolverSettings, SolverSettings__Output as _renyibound_v1_SolverSettings__Output } from '../../renyibound/v1/SolverSettings.js';
import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';

export interface SolveRequest {
  'problem'?: (_renyibound_v1_Problem | null);
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'settings'?: (_renyibound_v1_SolverSettings | null);
  'warmStart'?: (_renyibound_v1_Matrix | null);
  'requestId'?: (string);
  '_alpha'?: "alpha";
}

export interface SolveRequest__Output {
  'problem': (_renyibound_v1_Problem__Output | null);
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'settings': (_renyibound_v1_SolverSettings__Output | null);
  'warmStart': (_renyibound_v1_Matrix__Output | null);
  'requestId': (string);
  '_alpha'?: "alpha";
}
