// Original file: proto/renyibound/v1/service.proto

import type { ParameterAxis as _renyibound_v1_ParameterAxis, ParameterAxis__Output as _renyibound_v1_ParameterAxis__Output } from '../../renyibound/v1/ParameterAxis.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { SolverSettings as _renyibound_v1_SolverSettings, SolverSettings__Output as _renyibound_v1_SolverSettings__Output } from '../../renyibound/v1/SolverSettings.js';

export interface ParameterGrid {
  'example'?: (string);
  'baseParameters'?: ({[key: string]: number | string});
  'axes'?: (_renyibound_v1_ParameterAxis)[];
  'entropies'?: (_renyibound_v1_EntropyKind)[];
  'settings'?: (_renyibound_v1_SolverSettings | null);
}

export interface ParameterGrid__Output {
  'example': (string);
  'baseParameters': ({[key: string]: number});
  'axes': (_renyibound_v1_ParameterAxis__Output)[];
  'entropies': (_renyibound_v1_EntropyKind__Output)[];
  'settings': (_renyibound_v1_SolverSettings__Output | null);
}
