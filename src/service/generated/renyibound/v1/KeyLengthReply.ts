// Original file: proto/renyibound/v1/key_length.proto

import type { KeyLengthTerm as _renyibound_v1_KeyLengthTerm, KeyLengthTerm__Output as _renyibound_v1_KeyLengthTerm__Output } from '../../renyibound/v1/KeyLengthTerm.js';
import type { EpsilonSplit as _renyibound_v1_EpsilonSplit, EpsilonSplit__Output as _renyibound_v1_EpsilonSplit__Output } from '../../renyibound/v1/EpsilonSplit.js';
import type { AcceptanceWindow as _renyibound_v1_AcceptanceWindow, AcceptanceWindow__Output as _renyibound_v1_AcceptanceWindow__Output } from '../../renyibound/v1/AcceptanceWindow.js';
import type { VariableLengthRule as _renyibound_v1_VariableLengthRule, VariableLengthRule__Output as _renyibound_v1_VariableLengthRule__Output } from '../../renyibound/v1/VariableLengthRule.js';
import type { MinTradeoffFunction as _renyibound_v1_MinTradeoffFunction, MinTradeoffFunction__Output as _renyibound_v1_MinTradeoffFunction__Output } from '../../renyibound/v1/MinTradeoffFunction.js';
import type { Problem as _renyibound_v1_Problem, Problem__Output as _renyibound_v1_Problem__Output } from '../../renyibound/v1/Problem.js';

export interface KeyLengthReply {
  'keyLength'?: (number | string);
  'ratePerRound'?: (number | string);
  'rounds'?: (number | string);
  'alpha'?: (number | string);
  'scores'?: ({[key: string]: number | string});
  'singleRoundBoundJson'?: (string);
  'terms'?: (_renyibound_v1_KeyLengthTerm)[];
  'epsilons'?: (_renyibound_v1_EpsilonSplit | null);
  'acceptanceWindow'?: (_renyibound_v1_AcceptanceWindow | null);
  'errorCorrectionBits'?: (number | string);
  'variableLength'?: (_renyibound_v1_VariableLengthRule | null);
  'asymptoticRatePerRound'?: (number | string);
  'minTradeoff'?: (_renyibound_v1_MinTradeoffFunction | null);
  'singleRoundSolves'?: (number);
  'requestId'?: (string);
  'entropy'?: (string);
  'singleRoundProblem'?: (_renyibound_v1_Problem | null);
  '_asymptoticRatePerRound'?: "asymptoticRatePerRound";
}

export interface KeyLengthReply__Output {
  'keyLength': (number);
  'ratePerRound': (number);
  'rounds': (number);
  'alpha': (number);
  'scores': ({[key: string]: number});
  'singleRoundBoundJson': (string);
  'terms': (_renyibound_v1_KeyLengthTerm__Output)[];
  'epsilons': (_renyibound_v1_EpsilonSplit__Output | null);
  'acceptanceWindow': (_renyibound_v1_AcceptanceWindow__Output | null);
  'errorCorrectionBits': (number);
  'variableLength': (_renyibound_v1_VariableLengthRule__Output | null);
  'asymptoticRatePerRound'?: (number);
  'minTradeoff': (_renyibound_v1_MinTradeoffFunction__Output | null);
  'singleRoundSolves': (number);
  'requestId': (string);
  'entropy': (string);
  'singleRoundProblem': (_renyibound_v1_Problem__Output | null);
  '_asymptoticRatePerRound'?: "asymptoticRatePerRound";
}
