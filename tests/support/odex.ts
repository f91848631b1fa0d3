/**
 * The `odex` ODE solver from npm (E. Hairer and G. Wanner's ODEX, Gragg–Bulirsch–Stoer
 * extrapolation), the independent reference integrator of the tests and the integrator benchmark.
 * Loaded through require: its package ships TypeScript sources that our strict compiler settings
 * would otherwise type-check. Only the parts used here are typed.
 */
import { createRequire } from 'node:module';

export type OdexDense = (component: number, x: number) => number;

export interface OdexSolver {
  absoluteTolerance: number | number[];
  relativeTolerance: number | number[];
  denseOutput: boolean;
  maxSteps: number;
  /** Largest step (odex's own default is the whole interval, and its first step is at least 1e-4). */
  maxStepSize: number;
  solve(
    f: (x: number, y: number[]) => number[],
    x0: number,
    y0: number[],
    xEnd: number,
    solOut?: (n: number, xOld: number, x: number, y: number[], dense?: OdexDense) => boolean | void,
  ): { y: number[]; outcome: number; nEval: number; nAccept: number; nReject: number };
}

export const { Solver: OdexSolverClass } = createRequire(import.meta.url)('odex') as { Solver: new (n: number) => OdexSolver };
