// Original file: proto/renyibound/v1/service.proto

import type { Problem as _renyibound_v1_Problem, Problem__Output as _renyibound_v1_Problem__Output } from '../../renyibound/v1/Problem.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { SolveResult as _renyibound_v1_SolveResult, SolveResult__Output as _renyibound_v1_SolveResult__Output } from '../../renyibound/v1/SolveResult.js';

export interface VerifyRequest {
  'problem'?: (_renyibound_v1_Problem | null);
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'result'?: (_renyibound_v1_SolveResult | null);
  '_alpha'?: "alpha";
}

export interface VerifyRequest__Output {
  'problem': (_renyibound_v1_Problem__Output | null);
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'result': (_renyibound_v1_SolveResult__Output | null);
  '_alpha'?: "alpha";
}
