/**
 * Every traced ion ends with exactly one fate; the codes are stored per ion in a Uint8Array.
 * UNSET must never survive a trace: the engines and the tests check for it.
 */
export const Fate = {
  UNSET: 0,
  DETECTED: 1,
  STRUCK_REPELLER: 2,
  LEFT_SOURCE_DURING_DELAY: 3,
  PASSED_THROUGH_MIRROR: 4,
  TURNED_BACK: 5,
  MISSED_DETECTOR: 6,
  STRUCK_ELECTRODE: 7,
  INTEGRATION_FAILED: 8,
  TIMED_OUT: 9,
  /** The precursor fell apart in flight; its products are traced as fragments (src/physics/fragments). */
  DECAYED: 10,
  /** A neutral fragment with no detector on its straight path (it passed the mirror, none behind it). */
  NEUTRAL_LOST: 11,
  /** Passed the mirror's back plate and reached the linear detector behind the mirror. */
  DETECTED_BEHIND_MIRROR: 12,
} as const;

export type FateCode = (typeof Fate)[keyof typeof Fate];

/** Stable keys used in reports and JSON output, indexed by fate code. */
export const FATE_KEYS = [
  'unset',
  'detected',
  'struckRepeller',
  'leftSourceDuringDelay',
  'passedThroughMirror',
  'turnedBack',
  'missedDetector',
  'struckElectrode',
  'integrationFailed',
  'timedOut',
  'decayed',
  'neutralLost',
  'detectedBehindMirror',
] as const;

export type FateKey = (typeof FATE_KEYS)[number];

/** Plain-language reasons shown to users ("why ions were lost"). */
export const FATE_DESCRIPTIONS: Record<FateKey, string> = {
  unset: 'not traced (engine defect)',
  detected: 'reached the detector',
  struckRepeller: 'moved back and struck the repeller',
  leftSourceDuringDelay: 'left the source (through the ground grid) before the extraction pulse, so never extracted',
  passedThroughMirror: 'energy above the mirror back-plate potential: passed through the mirror',
  turnedBack: 'turned back by a retarding field before the detector',
  missedDetector: 'arrived outside the detector active area',
  struckElectrode: 'struck an electrode',
  integrationFailed: 'numerical integration failed',
  timedOut: 'still in flight at the time limit',
  decayed: 'decayed in flight (its fragments are reported per decay channel)',
  neutralLost: 'neutral fragment: flew straight on, no detector on its path',
  detectedBehindMirror: 'passed the mirror and reached the linear detector behind it',
};

export type FateCounts = Record<FateKey, number>;

export function emptyFateCounts(): FateCounts {
  const counts = {} as FateCounts;
  for (const key of FATE_KEYS) counts[key] = 0;
  return counts;
}

export function countFates(fates: Uint8Array, from = 0, to = fates.length): FateCounts {
  const tally = new Array<number>(FATE_KEYS.length).fill(0);
  for (let i = from; i < to; i++) tally[fates[i]]++;
  const counts = emptyFateCounts();
  FATE_KEYS.forEach((key, code) => (counts[key] = tally[code]));
  return counts;
}

/**
 * How an ion left a region, or one crossing inside it: the one exit vocabulary of the engine. A
 * kernel or a crossing returns either one of these (the ion is still in flight) or a `Fate` code
 * other than UNSET and DETECTED (the ion is lost there, and that is its fate). The codes do not
 * overlap the fates, so one number says both. The older names (uniformField `Crossing`,
 * numericRegions `Exit`, the solved tracer's `SolvedExit`) are views of these codes.
 */
export const Exit = {
  /** Through the far plane (for a whole section: on to the next section of the unfolded flight). */
  FAR: 16,
  /** Back through the entry plane. */
  ENTRY: 17,
  /** Still inside at the end time of the call (a waveform breakpoint, a settle time or the time limit). */
  PAUSED: 18,
} as const;

export type ExitCode = (typeof Exit)[keyof typeof Exit];

/** A region's outcome: an exit while in flight, or the fate of an ion lost in it. */
export type RegionExit = ExitCode | FateCode;

/** True for the fate codes (ion lost or decided), false for the in-flight exits. */
export function isFateCode(code: number): code is FateCode {
  return code < Exit.FAR;
}
