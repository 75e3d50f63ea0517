// Original file: proto/renyibound/v1/service.proto


export interface Progress {
  'done'?: (number);
  'total'?: (number);
}

export interface Progress__Output {
  'done': (number);
  'total': (number);
}
