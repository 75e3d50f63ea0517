// The semidefinite linear oracle: minimize ⟨G, σ⟩ over density operators meeting linear constraints.
export { LinearOracle, PRIMAL_FEASIBILITY_TOLERANCE, INFEASIBILITY_MARGIN } from './linear-oracle.js';
export {
  DEFAULT_ORACLE_SETTINGS,
  OracleInputError,
  type Checkpoint,
  type MinimizeOptions,
  type OracleOptions,
  type InfeasibilityCertificate,
  type OracleConstraint,
  type OracleResult,
  type OracleSettings,
  type OracleStatus,
} from './types.js';
export { exposeFeasibleFace, exposeIfRankDeficient, exposingMultipliers, type ExposedFace, type ExposeOptions } from './face-exposure.js';
