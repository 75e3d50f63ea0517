// Original file: proto/renyibound/v1/decoy.proto

import type { DecoyChannel as _renyibound_v1_DecoyChannel, DecoyChannel__Output as _renyibound_v1_DecoyChannel__Output } from '../../renyibound/v1/DecoyChannel.js';
import type { DecoyProtocol as _renyibound_v1_DecoyProtocol, DecoyProtocol__Output as _renyibound_v1_DecoyProtocol__Output } from '../../renyibound/v1/DecoyProtocol.js';
import type { DecoyMeasuredCounts as _renyibound_v1_DecoyMeasuredCounts, DecoyMeasuredCounts__Output as _renyibound_v1_DecoyMeasuredCounts__Output } from '../../renyibound/v1/DecoyMeasuredCounts.js';
import type { EntropyKind as _renyibound_v1_EntropyKind, EntropyKind__Output as _renyibound_v1_EntropyKind__Output } from '../../renyibound/v1/EntropyKind.js';

export interface DecoyRateRequest {
  'channel'?: (_renyibound_v1_DecoyChannel | null);
  'protocol'?: (_renyibound_v1_DecoyProtocol | null);
  'counts'?: (_renyibound_v1_DecoyMeasuredCounts | null);
  'session'?: (number);
  'fit'?: (boolean);
  'sweepDistancesKm'?: (number | string)[];
  'entropy'?: (_renyibound_v1_EntropyKind);
  'alpha'?: (number | string);
  'cutoff'?: (number);
  'timeLimitMs'?: (number);
  '_session'?: "session";
  '_alpha'?: "alpha";
}

export interface DecoyRateRequest__Output {
  'channel': (_renyibound_v1_DecoyChannel__Output | null);
  'protocol': (_renyibound_v1_DecoyProtocol__Output | null);
  'counts': (_renyibound_v1_DecoyMeasuredCounts__Output | null);
  'session'?: (number);
  'fit': (boolean);
  'sweepDistancesKm': (number)[];
  'entropy': (_renyibound_v1_EntropyKind__Output);
  'alpha'?: (number);
  'cutoff': (number);
  'timeLimitMs': (number);
  '_session'?: "session";
  '_alpha'?: "alpha";
}
