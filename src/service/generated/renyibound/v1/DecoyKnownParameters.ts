// Original file: proto/renyibound/v1/decoy.proto


export interface DecoyKnownParameters {
  'fiberLossDbPerKm'?: (number | string);
  'detectorEfficiency'?: (number | string);
  'darkCountYield'?: (number | string);
  'misalignment'?: (number | string);
  '_fiberLossDbPerKm'?: "fiberLossDbPerKm";
  '_detectorEfficiency'?: "detectorEfficiency";
  '_darkCountYield'?: "darkCountYield";
  '_misalignment'?: "misalignment";
}

export interface DecoyKnownParameters__Output {
  'fiberLossDbPerKm'?: (number);
  'detectorEfficiency'?: (number);
  'darkCountYield'?: (number);
  'misalignment'?: (number);
  '_fiberLossDbPerKm'?: "fiberLossDbPerKm";
  '_detectorEfficiency'?: "detectorEfficiency";
  '_darkCountYield'?: "darkCountYield";
  '_misalignment'?: "misalignment";
}
