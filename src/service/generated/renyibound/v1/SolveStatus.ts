// Original file: proto/renyibound/v1/service.proto

export const SolveStatus = {
  SOLVE_STATUS_UNSPECIFIED: 'SOLVE_STATUS_UNSPECIFIED',
  CERTIFIED: 'CERTIFIED',
  LIMIT_REACHED: 'LIMIT_REACHED',
  INFEASIBLE: 'INFEASIBLE',
  NUMERICAL_ERROR: 'NUMERICAL_ERROR',
  FEASIBILITY_UNDECIDED: 'FEASIBILITY_UNDECIDED',
} as const;

export type SolveStatus =
  | 'SOLVE_STATUS_UNSPECIFIED'
  | 0
  | 'CERTIFIED'
  | 1
  | 'LIMIT_REACHED'
  | 2
  | 'INFEASIBLE'
  | 3
  | 'NUMERICAL_ERROR'
  | 4
  | 'FEASIBILITY_UNDECIDED'
  | 5

export type SolveStatus__Output = typeof SolveStatus[keyof typeof SolveStatus]
