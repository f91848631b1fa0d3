/**
 * The solved-field mirror's model under its earlier module name (the kernel is in
 * src/physics/regions/solvedKernels.ts, the transfer map in solvedMirrorMap.ts; both carry the
 * transverse state in each ion's IonState, so no module-level ion state is left).
 */
import type { SolvedMirrorModel } from './regions/solvedKernels';

export type { SolvedMirrorModel };
