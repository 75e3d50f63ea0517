// Original file: proto/renyibound/v1/service.proto

import type { SolveResult as _renyibound_v1_SolveResult, SolveResult__Output as _renyibound_v1_SolveResult__Output } from '../../renyibound/v1/SolveResult.js';

export interface SolveReply {
  'result'?: (_renyibound_v1_SolveResult | null);
  'requestId'?: (string);
}

export interface SolveReply__Output {
  'result': (_renyibound_v1_SolveResult__Output | null);
  'requestId': (string);
}
