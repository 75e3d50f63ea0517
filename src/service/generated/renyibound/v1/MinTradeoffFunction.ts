// Original file: proto/renyibound/v1/problem.proto


export interface _renyibound_v1_MinTradeoffFunction_Coefficient {
  'label'?: (string);
  'coefficient'?: (number | string);
}

export interface _renyibound_v1_MinTradeoffFunction_Coefficient__Output {
  'label': (string);
  'coefficient': (number);
}

export interface MinTradeoffFunction {
  'constant'?: (number | string);
  'coefficients'?: (_renyibound_v1_MinTradeoffFunction_Coefficient)[];
  'validity'?: (string);
  'minimumOverIntervals'?: (number | string);
}

export interface MinTradeoffFunction__Output {
  'constant': (number);
  'coefficients': (_renyibound_v1_MinTradeoffFunction_Coefficient__Output)[];
  'validity': (string);
  'minimumOverIntervals': (number);
}
