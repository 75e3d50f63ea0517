// Original file: proto/renyibound/v1/service.proto

import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';
import type { SolverSettings as _renyibound_v1_SolverSettings, SolverSettings__Output as _renyibound_v1_SolverSettings__Output } from '../../renyibound/v1/SolverSettings.js';
import type { FaceExposure as _renyibound_v1_FaceExposure, FaceExposure__Output as _renyibound_v1_FaceExposure__Output } from '../../renyibound/v1/FaceExposure.js';

export interface Certificate {
  'inputHash'?: (string);
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'linearizationState'?: (_renyibound_v1_Matrix | null);
  'referenceStates'?: (_renyibound_v1_Matrix)[];
  'multipliersLower'?: (number | string)[];
  'multipliersUpper'?: (number | string)[];
  'claimedBound'?: (number | string);
  'toleranceMargin'?: (number | string);
  'solverVersion'?: (string);
  'settings'?: (_renyibound_v1_SolverSettings | null);
  'faceExposures'?: (_renyibound_v1_FaceExposure)[];
  'linearizationOffFace'?: (boolean);
  '_alpha'?: "alpha";
}

export interface Certificate__Output {
  'inputHash': (string);
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'linearizationState': (_renyibound_v1_Matrix__Output | null);
  'referenceStates': (_renyibound_v1_Matrix__Output)[];
  'multipliersLower': (number)[];
  'multipliersUpper': (number)[];
  'claimedBound': (number);
  'toleranceMargin': (number);
  'solverVersion': (string);
  'settings': (_renyibound_v1_SolverSettings__Output | null);
  'faceExposures': (_renyibound_v1_FaceExposure__Output)[];
  'linearizationOffFace': (boolean);
  '_alpha'?: "alpha";
}
