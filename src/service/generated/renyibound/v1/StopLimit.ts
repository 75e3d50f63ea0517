// Original file: proto/renyibound/v1/service.proto

export const StopLimit = {
  STOP_LIMIT_UNSPECIFIED: 'STOP_LIMIT_UNSPECIFIED',
  STOP_LIMIT_ITERATIONS: 'STOP_LIMIT_ITERATIONS',
  STOP_LIMIT_TIME: 'STOP_LIMIT_TIME',
  STOP_LIMIT_CANCELLED: 'STOP_LIMIT_CANCELLED',
  STOP_LIMIT_NO_PROGRESS: 'STOP_LIMIT_NO_PROGRESS',
} as const;

export type StopLimit =
  | 'STOP_LIMIT_UNSPECIFIED'
  | 0
  | 'STOP_LIMIT_ITERATIONS'
  | 1
  | 'STOP_LIMIT_TIME'
  | 2
  | 'STOP_LIMIT_CANCELLED'
  | 3
  | 'STOP_LIMIT_NO_PROGRESS'
  | 4

export type StopLimit__Output = typeof StopLimit[keyof typeof StopLimit]
