/** Checks shared by scans and tunes: ion count, seed, width measure. */
import { LIMITS } from '../presets/schema';
import type { WidthMeasure } from './api';
import { TuningInputError } from './errors';
import { WIDTH_MEASURES } from './objective';

export function checkIons(ions: number | undefined, label = 'ions'): void {
  if (ions === undefined) return;
  if (!Number.isInteger(ions) || ions < LIMITS.ions.min || ions > LIMITS.ions.max) {
    throw new TuningInputError(label, `must be an integer from ${LIMITS.ions.min} to ${LIMITS.ions.max} (got ${ions})`);
  }
}

export function checkSeed(seed: number | undefined, label = 'seed'): void {
  if (seed === undefined) return;
  if (!Number.isInteger(seed) || seed < LIMITS.seed.min || seed > LIMITS.seed.max) {
    throw new TuningInputError(label, `must be an integer from ${LIMITS.seed.min} to ${LIMITS.seed.max} (got ${seed})`);
  }
}

export function checkMeasure(measure: WidthMeasure | undefined, label = 'measure'): WidthMeasure {
  if (measure === undefined) return 'sd';
  if (!WIDTH_MEASURES.includes(measure)) throw new TuningInputError(label, `must be one of ${WIDTH_MEASURES.join(', ')} (got ${String(measure)})`);
  return measure;
}
