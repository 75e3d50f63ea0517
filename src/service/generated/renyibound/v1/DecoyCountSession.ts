// Original file: proto/renyibound/v1/decoy.proto

import type { DecoyCountRecord as _renyibound_v1_DecoyCountRecord, DecoyCountRecord__Output as _renyibound_v1_DecoyCountRecord__Output } from '../../renyibound/v1/DecoyCountRecord.js';

export interface DecoyCountSession {
  'label'?: (string);
  'distanceKm'?: (number | string);
  'counts'?: (_renyibound_v1_DecoyCountRecord)[];
}

export interface DecoyCountSession__Output {
  'label': (string);
  'distanceKm': (number);
  'counts': (_renyibound_v1_DecoyCountRecord__Output)[];
}
