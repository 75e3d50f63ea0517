// Original file: proto/renyibound/v1/decoy.proto

import type { DecoySweepPoint as _renyibound_v1_DecoySweepPoint, DecoySweepPoint__Output as _renyibound_v1_DecoySweepPoint__Output } from '../../renyibound/v1/DecoySweepPoint.js';
import type { DecoyFittedParameter as _renyibound_v1_DecoyFittedParameter, DecoyFittedParameter__Output as _renyibound_v1_DecoyFittedParameter__Output } from '../../renyibound/v1/DecoyFittedParameter.js';

export interface DecoyRateReply {
  'ratePerPulse'?: (number | string);
  'singlePhotonYieldLower'?: (number | string);
  'singlePhotonErrorUpper'?: (number | string);
  'singlePhotonFraction'?: (number | string);
  'singlePhotonBound'?: (number | string);
  'singlePhotonStatus'?: (string);
  'sweep'?: (_renyibound_v1_DecoySweepPoint)[];
  'fittedParameters'?: (_renyibound_v1_DecoyFittedParameter)[];
  'chiSquare'?: (number | string);
  'degreesOfFreedom'?: (number);
  'answerJson'?: (string);
  '_ratePerPulse'?: "ratePerPulse";
  '_singlePhotonBound'?: "singlePhotonBound";
}

export interface DecoyRateReply__Output {
  'ratePerPulse'?: (number);
  'singlePhotonYieldLower': (number);
  'singlePhotonErrorUpper': (number);
  'singlePhotonFraction': (number);
  'singlePhotonBound'?: (number);
  'singlePhotonStatus': (string);
  'sweep': (_renyibound_v1_DecoySweepPoint__Output)[];
  'fittedParameters': (_renyibound_v1_DecoyFittedParameter__Output)[];
  'chiSquare': (number);
  'degreesOfFreedom': (number);
  'answerJson': (string);
  '_ratePerPulse'?: "ratePerPulse";
  '_singlePhotonBound'?: "singlePhotonBound";
}
