// Original file: proto/renyibound/v1/service.proto


export interface ParameterAxis {
  'name'?: (string);
  'values'?: (number | string)[];
}

export interface ParameterAxis__Output {
  'name': (string);
  'values': (number)[];
}
