// Original file: proto/renyibound/v1/problem.proto

export const EntropyKind = {
  ENTROPY_KIND_UNSPECIFIED: 'ENTROPY_KIND_UNSPECIFIED',
  VON_NEUMANN: 'VON_NEUMANN',
  PETZ_UP: 'PETZ_UP',
  PETZ_DOWN: 'PETZ_DOWN',
  SANDWICHED_UP: 'SANDWICHED_UP',
} as const;

export type EntropyKind =
  | 'ENTROPY_KIND_UNSPECIFIED'
  | 0
  | 'VON_NEUMANN'
  | 1
  | 'PETZ_UP'
  | 2
  | 'PETZ_DOWN'
  | 3
  | 'SANDWICHED_UP'
  | 4

export type EntropyKind__Output = typeof EntropyKind[keyof typeof EntropyKind]
