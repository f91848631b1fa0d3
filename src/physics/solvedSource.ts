/**
 * The solved-field source's model (the kernel is in src/physics/regions/solvedKernels.ts), under
 * its earlier module name.
 */
export type { SolvedSourceModel } from './regions/solvedKernels';
