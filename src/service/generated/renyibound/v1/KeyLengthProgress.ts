// Original file: proto/renyibound/v1/key_length.proto


export interface KeyLengthProgress {
  'phase'?: (string);
  'singleRoundSolves'?: (number);
  'seconds'?: (number | string);
  'alpha'?: (number | string);
  'singleRoundBound'?: (number | string);
  'bestRatePerRound'?: (number | string);
  'bestAlpha'?: (number | string);
  '_alpha'?: "alpha";
  '_singleRoundBound'?: "singleRoundBound";
  '_bestRatePerRound'?: "bestRatePerRound";
  '_bestAlpha'?: "bestAlpha";
}

export interface KeyLengthProgress__Output {
  'phase': (string);
  'singleRoundSolves': (number);
  'seconds': (number);
  'alpha'?: (number);
  'singleRoundBound'?: (number);
  'bestRatePerRound'?: (number);
  'bestAlpha'?: (number);
  '_alpha'?: "alpha";
  '_singleRoundBound'?: "singleRoundBound";
  '_bestRatePerRound'?: "bestRatePerRound";
  '_bestAlpha'?: "bestAlpha";
}
