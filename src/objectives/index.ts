export {
  createObjective,
  branchWeight,
  largestDimension,
  logCoefficient,
  normaliseRequest,
  sandwichedOrder,
  type Objective,
  type ObjectiveEvaluation,
  type JointEvaluation,
  type IdentitySplit,
} from './objective.js';
export type { ReferenceBlocks } from './sandwiched-up.js';
export type { BranchSupport } from './branch-supports.js';
