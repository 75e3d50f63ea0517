// Original file: proto/renyibound/v1/service.proto

import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { SolveResult as _renyibound_v1_SolveResult, SolveResult__Output as _renyibound_v1_SolveResult__Output } from '../../renyibound/v1/SolveResult.js';
import type { Progress as _renyibound_v1_Progress, Progress__Output as _renyibound_v1_Progress__Output } from '../../renyibound/v1/Progress.js';

export interface BatchItem {
  'index'?: (number);
  'point'?: ({[key: string]: number | string});
  'entropy'?: (_renyibound_v1_EntropyKind);
  'result'?: (_renyibound_v1_SolveResult | null);
  'errorField'?: (string);
  'errorMessage'?: (string);
  'progress'?: (_renyibound_v1_Progress | null);
}

export interface BatchItem__Output {
  'index': (number);
  'point': ({[key: string]: number});
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'result': (_renyibound_v1_SolveResult__Output | null);
  'errorField': (string);
  'errorMessage': (string);
  'progress': (_renyibound_v1_Progress__Output | null);
}
