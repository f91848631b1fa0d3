/**
 * The integrator's first-step memory as the engine kept it before the region model: one per
 * process, carried from run to run. Kept for the moment so that the region model reproduces the
 * earlier numbers bit for bit; see the driver for its use.
 */
import { FORCE_LAWS } from './axialIntegrator';

export const sharedFirstStep = new Float64Array(FORCE_LAWS);
