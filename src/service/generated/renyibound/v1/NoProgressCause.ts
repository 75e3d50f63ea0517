// Original file: proto/renyibound/v1/service.proto

export const NoProgressCause = {
  NO_PROGRESS_CAUSE_UNSPECIFIED: 'NO_PROGRESS_CAUSE_UNSPECIFIED',
  NO_PROGRESS_CAUSE_MARGIN: 'NO_PROGRESS_CAUSE_MARGIN',
  NO_PROGRESS_CAUSE_ORACLE_ACCURACY: 'NO_PROGRESS_CAUSE_ORACLE_ACCURACY',
} as const;

export type NoProgressCause =
  | 'NO_PROGRESS_CAUSE_UNSPECIFIED'
  | 0
  | 'NO_PROGRESS_CAUSE_MARGIN'
  | 1
  | 'NO_PROGRESS_CAUSE_ORACLE_ACCURACY'
  | 2

export type NoProgressCause__Output = typeof NoProgressCause[keyof typeof NoProgressCause]
