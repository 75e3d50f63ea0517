// Original file: proto/renyibound/v1/problem.proto


export interface Matrix {
  'rows'?: (number);
  'cols'?: (number);
  're'?: (number | string)[];
  'im'?: (number | string)[];
}

export interface Matrix__Output {
  'rows': (number);
  'cols': (number);
  're': (number)[];
  'im': (number)[];
}
