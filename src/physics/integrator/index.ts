/** Embedded Runge–Kutta integrator with error control, dense output and events. */
export { DOP853, DOPRI5, compressRows, type RungeKuttaTableau, type SparseRows } from './tableaus';
export {
  MAX_FACTOR,
  MESSAGE_DONE,
  MIN_FACTOR,
  MIN_RTOL,
  RungeKuttaWorkspace,
  SAFETY,
  SolveResult,
  createResult,
  createSolveOptions,
  createWorkspace,
  defineProblem,
  errorNorm,
  rungeKuttaStep,
  selectInitialStep,
  solve,
  type OdeProblem,
  type RhsFunction,
  type SolveOptions,
  type SolveStatus,
} from './rungeKutta';
export { evaluateDenseOutput, prepareDenseOutput } from './denseOutput';
export {
  MESSAGE_TERMINAL_EVENT,
  defineEvent,
  type EventDirection,
  type EventFunction,
  type OdeEvent,
} from './events';
export { createRootReport, findRootBrent, type RootReport, type ScalarFunction } from './brent';
export { AXIAL_HIGH, AXIAL_LOW, AXIAL_TURN, solveAxial, type AxialForce } from './axialMotion';
export { SPACE_ENTRY, SPACE_FAR, SPACE_GUARD, solveSpace, type SpaceForce } from './spaceMotion';
