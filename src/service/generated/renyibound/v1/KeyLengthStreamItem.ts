// Original file: proto/renyibound/v1/key_length.proto

import type { KeyLengthProgress as _renyibound_v1_KeyLengthProgress, KeyLengthProgress__Output as _renyibound_v1_KeyLengthProgress__Output } from '../../renyibound/v1/KeyLengthProgress.js';
import type { KeyLengthReply as _renyibound_v1_KeyLengthReply, KeyLengthReply__Output as _renyibound_v1_KeyLengthReply__Output } from '../../renyibound/v1/KeyLengthReply.js';

export interface KeyLengthStreamItem {
  'progress'?: (_renyibound_v1_KeyLengthProgress | null);
  'reply'?: (_renyibound_v1_KeyLengthReply | null);
  'item'?: "progress"|"reply";
}

export interface KeyLengthStreamItem__Output {
  'progress'?: (_renyibound_v1_KeyLengthProgress__Output | null);
  'reply'?: (_renyibound_v1_KeyLengthReply__Output | null);
  'item'?: "progress"|"reply";
}
