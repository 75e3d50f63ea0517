// Original file: proto/renyibound/v1/key_length.proto

import type { Problem as _renyibound_v1_Problem, Problem__Output as _renyibound_v1_Problem__Output } from '../../renyibound/v1/Problem.js';

export interface KeyLengthRequest {
  'problem'?: (_renyibound_v1_Problem | null);
  'rounds'?: (number | string);
  'epsilonSecrecy'?: (number | string);
  'epsilonCompleteness'?: (number | string);
  'epsilonPrivacyAmplification'?: (number | string);
  'epsilonErrorVerification'?: (number | string);
  'ecEfficiency'?: (number | string);
  'errorCorrectionBits'?: (number | string);
  'alpha'?: (number | string);
  'variableLength'?: (boolean);
  'fast'?: (boolean);
  'requestId'?: (string);
  '_epsilonSecrecy'?: "epsilonSecrecy";
  '_epsilonCompleteness'?: "epsilonCompleteness";
  '_epsilonPrivacyAmplification'?: "epsilonPrivacyAmplification";
  '_epsilonErrorVerification'?: "epsilonErrorVerification";
  '_ecEfficiency'?: "ecEfficiency";
  '_errorCorrectionBits'?: "errorCorrectionBits";
  '_alpha'?: "alpha";
}

export interface KeyLengthRequest__Output {
  'problem': (_renyibound_v1_Problem__Output | null);
  'rounds': (number);
  'epsilonSecrecy'?: (number);
  'epsilonCompleteness'?: (number);
  'epsilonPrivacyAmplification'?: (number);
  'epsilonErrorVerification'?: (number);
  'ecEfficiency'?: (number);
  'errorCorrectionBits'?: (number);
  'alpha'?: (number);
  'variableLength': (boolean);
  'fast': (boolean);
  'requestId': (string);
  '_epsilonSecrecy'?: "epsilonSecrecy";
  '_epsilonCompleteness'?: "epsilonCompleteness";
  '_epsilonPrivacyAmplification'?: "epsilonPrivacyAmplification";
  '_epsilonErrorVerification'?: "epsilonErrorVerification";
  '_ecEfficiency'?: "ecEfficiency";
  '_errorCorrectionBits'?: "errorCorrectionBits";
  '_alpha'?: "alpha";
}
