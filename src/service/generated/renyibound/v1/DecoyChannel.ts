// Original file: proto/renyibound/v1/decoy.proto


export interface DecoyChannel {
  'distanceKm'?: (number | string);
  'fiberLossDbPerKm'?: (number | string);
  'detectorEfficiency'?: (number | string);
  'darkCountYield'?: (number | string);
  'misalignment'?: (number | string);
}

export interface DecoyChannel__Output {
  'distanceKm': (number);
  'fiberLossDbPerKm': (number);
  'detectorEfficiency': (number);
  'darkCountYield': (number);
  'misalignment': (number);
}
