// Original file: proto/renyibound/v1/service.proto

import type { SolveRequestList as _renyibound_v1_SolveRequestList, SolveRequestList__Output as _renyibound_v1_SolveRequestList__Output } from '../../renyibound/v1/SolveRequestList.js';
import type { ParameterGrid as _renyibound_v1_ParameterGrid, ParameterGrid__Output as _renyibound_v1_ParameterGrid__Output } from '../../renyibound/v1/ParameterGrid.js';

export interface BatchRequest {
  'requests'?: (_renyibound_v1_SolveRequestList | null);
  'grid'?: (_renyibound_v1_ParameterGrid | null);
  'requestId'?: (string);
  'disableWarmStart'?: (boolean);
  'source'?: "requests"|"grid";
}

export interface BatchRequest__Output {
  'requests'?: (_renyibound_v1_SolveRequestList__Output | null);
  'grid'?: (_renyibound_v1_ParameterGrid__Output | null);
  'requestId': (string);
  'disableWarmStart': (boolean);
  'source'?: "requests"|"grid";
}
