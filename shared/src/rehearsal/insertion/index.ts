// The insertion rehearsal's needle and breathing: Lujan's breathing curve driving the liver,
// a rigid needle held by its base, the constraint solve that couples them to the tissue solver,
// and the free-hand insertion (README.md in this folder).
export * from './breathing';
export * from './needle';
export {
  ConstraintSolver,
  exactCompliance,
  projectedGaussSeidel,
  rowTimes,
  addRowTranspose,
  type ComplianceMode,
  type ConstraintKind,
  type ConstraintRow,
  type ConstraintSolution,
  type ConstraintSolveOptions,
} from './constraints';
export { PrecomputedCompliance, type ComplianceStats } from './compliance';
export * from './insertion-simulation';
export * from './rehearse-freehand';
