// Original file: proto/renyibound/v1/decoy.proto

import type { DecoyKnownParameters as _renyibound_v1_DecoyKnownParameters, DecoyKnownParameters__Output as _renyibound_v1_DecoyKnownParameters__Output } from '../../renyibound/v1/DecoyKnownParameters.js';
import type { DecoyCountSession as _renyibound_v1_DecoyCountSession, DecoyCountSession__Output as _renyibound_v1_DecoyCountSession__Output } from '../../renyibound/v1/DecoyCountSession.js';

export interface DecoyMeasuredCounts {
  'description'?: (string);
  'signal'?: (number | string);
  'decoys'?: (number | string)[];
  'zBasisProbability'?: (number | string);
  'known'?: (_renyibound_v1_DecoyKnownParameters | null);
  'sessions'?: (_renyibound_v1_DecoyCountSession)[];
}

export interface DecoyMeasuredCounts__Output {
  'description': (string);
  'signal': (number);
  'decoys': (number)[];
  'zBasisProbability': (number);
  'known': (_renyibound_v1_DecoyKnownParameters__Output | null);
  'sessions': (_renyibound_v1_DecoyCountSession__Output)[];
}
