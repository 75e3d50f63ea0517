// Original file: proto/renyibound/v1/service.proto

import type { SolveRequest as _renyibound_v1_SolveRequest, SolveRequest__Output as _renyibound_v1_SolveRequest__Output } from '../../renyibound/v1/SolveRequest.js';

export interface SolveRequestList {
  'requests'?: (_renyibound_v1_SolveRequest)[];
}

export interface SolveRequestList__Output {
  'requests': (_renyibound_v1_SolveRequest__Output)[];
}
