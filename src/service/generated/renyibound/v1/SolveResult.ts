// Original file: proto/renyibound/v1/service.proto

import type { SolveStatus as _renyibound_v1_SolveStatus, SolveStatus__Output as _renyibound_v1_SolveStatus__Output } from '../../renyibound/v1/SolveStatus.js';
import type { StopLimit as _renyibound_v1_StopLimit, StopLimit__Output as _renyibound_v1_StopLimit__Output } from '../../renyibound/v1/StopLimit.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';
import type { Certificate as _renyibound_v1_Certificate, Certificate__Output as _renyibound_v1_Certificate__Output } from '../../renyibound/v1/Certificate.js';
import type { InfeasibilityCertificate as _renyibound_v1_InfeasibilityCertificate, InfeasibilityCertificate__Output as _renyibound_v1_InfeasibilityCertificate__Output } from '../../renyibound/v1/InfeasibilityCertificate.js';
import type { Matrix as _renyibound_v1_Matrix, Matrix__Output as _renyibound_v1_Matrix__Output } from '../../renyibound/v1/Matrix.js';
import type { NoProgressCause as _renyibound_v1_NoProgressCause, NoProgressCause__Output as _renyibound_v1_NoProgressCause__Output } from '../../renyibound/v1/NoProgressCause.js';
import type { MinTradeoffFunction as _renyibound_v1_MinTradeoffFunction, MinTradeoffFunction__Output as _renyibound_v1_MinTradeoffFunction__Output } from '../../renyibound/v1/MinTradeoffFunction.js';

export interface SolveResult {
  'status'?: (_renyibound_v1_SolveStatus);
  'limit'?: (_renyibound_v1_StopLimit);
  'message'?: (string);
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'certifiedLowerBound'?: (number | string);
  'upperBound'?: (number | string);
  'gap'?: (number | string);
  'toleranceMargin'?: (number | string);
  'statisticalSlack'?: (number | string);
  'maxConstraintViolation'?: (number | string);
  'iterations'?: (number);
  'seconds'?: (number | string);
  'oracleSeconds'?: (number | string);
  'inputHash'?: (string);
  'certificate'?: (_renyibound_v1_Certificate | null);
  'infeasibility'?: (_renyibound_v1_InfeasibilityCertificate | null);
  'finalState'?: (_renyibound_v1_Matrix | null);
  'fromCache'?: (boolean);
  'relativeConstraintViolation'?: (number | string);
  'feasibilityTolerance'?: (number | string);
  'trivialBound'?: (number | string);
  'trivialBoundUsed'?: (boolean);
  'notes'?: (string)[];
  'noProgressCause'?: (_renyibound_v1_NoProgressCause);
  'minTradeoff'?: (_renyibound_v1_MinTradeoffFunction | null);
  '_alpha'?: "alpha";
  '_certifiedLowerBound'?: "certifiedLowerBound";
  '_upperBound'?: "upperBound";
  '_gap'?: "gap";
  '_toleranceMargin'?: "toleranceMargin";
  '_statisticalSlack'?: "statisticalSlack";
  '_maxConstraintViolation'?: "maxConstraintViolation";
  '_relativeConstraintViolation'?: "relativeConstraintViolation";
}

export interface SolveResult__Output {
  'status': (_renyibound_v1_SolveStatus__Output);
  'limit': (_renyibound_v1_StopLimit__Output);
  'message': (string);
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'certifiedLowerBound'?: (number);
  'upperBound'?: (number);
  'gap'?: (number);
  'toleranceMargin'?: (number);
  'statisticalSlack'?: (number);
  'maxConstraintViolation'?: (number);
  'iterations': (number);
  'seconds': (number);
  'oracleSeconds': (number);
  'inputHash': (string);
  'certificate': (_renyibound_v1_Certificate__Output | null);
  'infeasibility': (_renyibound_v1_InfeasibilityCertificate__Output | null);
  'finalState': (_renyibound_v1_Matrix__Output | null);
  'fromCache': (boolean);
  'relativeConstraintViolation'?: (number);
  'feasibilityTolerance': (number);
  'trivialBound': (number);
  'trivialBoundUsed': (boolean);
  'notes': (string)[];
  'noProgressCause': (_renyibound_v1_NoProgressCause__Output);
  'minTradeoff': (_renyibound_v1_MinTradeoffFunction__Output | null);
  '_alpha'?: "alpha";
  '_certifiedLowerBound'?: "certifiedLowerBound";
  '_upperBound'?: "upperBound";
  '_gap'?: "gap";
  '_toleranceMargin'?: "toleranceMargin";
  '_statisticalSlack'?: "statisticalSlack";
  '_maxConstraintViolation'?: "maxConstraintViolation";
  '_relativeConstraintViolation'?: "relativeConstraintViolation";
}
