/**
 * The resolving-power-versus-load curve, as plain data (tested in Node): which ions-per-shot values
 * to run, the setup of one point (the working setup with only `ionLoad.ionsPerShot` changed), and the
 * per-species R and peak shift read back from each point's ion-load report (src/simulation/ionLoad.ts).
 *
 * The figure: with a detection mode, the R of the peak the detector records (dead time, saturation,
 * gain spread included) and its shift against an ideal detector of the same ions; with space charge,
 * the R of the species' spectrum peak (ions alone without acquisition settings) and the mean
 * flight-time shift against the same ions flown alone. With both, the R is the detector's and the
 * shift is the sum of the two (space charge moves the ions, the detector moves the recorded peak).
 */
import { ION_LOAD_LIMITS } from '../../presets/ionLoadSchema';
import type { Preset } from '../../presets/schema';
import type { IonLoadReport } from '../../simulation/ionLoad';
import type { RunReport } from '../../simulation/report';

export const DEFAULT_LOAD_VALUES = [1, 10, 100, 1000] as const;

/** Parse "1, 10, 100" into ascending distinct values; a one-line message naming the field when bad. */
export function parseLoadValues(text: string, label = 'ions per shot values'): number[] | string {
  const parts = text.split(/[\s,;]+/).filter((p) => p !== '');
  const { min, max } = ION_LOAD_LIMITS.ionsPerShot;
  const { max: most } = ION_LOAD_LIMITS.sweepPoints;
  if (parts.length < 2 || parts.length > most) return `${label}: give 2 to ${most} values separated by commas (got ${parts.length})`;
  const values: number[] = [];
  for (const p of parts) {
    const v = /^[+]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/.test(p) ? Number(p) : NaN;
    if (!(v > min && v <= max)) return `${label}: "${p}" must be a number > ${min} and ≤ ${max} ions`;
    values.push(v);
  }
  return [...new Set(values)].sort((a, b) => a - b);
}

/** Why the working setup has no load curve (no ionLoad section, or nothing in it that depends on the load); null when it has one. */
export function loadCurveUnavailable(preset: Preset): string | null {
  const load = preset.ionLoad;
  if (!load) return 'Switch on "ion load per shot" in the panel (Detector and acquisition), with a detection mode or space charge.';
  if (!load.detection && !load.spaceCharge) return 'The ion load has neither a detection mode nor space charge switched on, so nothing in this setup depends on the ions per shot.';
  return null;
}

/** The setup of one point: the working setup at `ionsPerShot`, without a sweep of its own. */
export function loadPointPreset(preset: Preset, ionsPerShot: number): Preset {
  const copy = structuredClone(preset);
  if (!copy.ionLoad) throw new Error('the setup has no ionLoad section');
  copy.ionLoad = { ...copy.ionLoad, ionsPerShot };
  delete copy.ionLoad.sweepIonsPerShot;
  return copy;
}

export interface LoadCurveSpecies {
  readonly label: string;
  readonly mz: number;
  readonly resolvingPower: (number | null)[];
  readonly shift_ppm: (number | null)[];
}

export interface LoadCurve {
  readonly ionsPerShot: number[];
  readonly species: LoadCurveSpecies[];
  /** Which R the curve shows, in words. */
  readonly figure: string;
}

function speciesFigures(load: IonLoadReport, s: number): { r: number | null; shift: number | null } {
  const detection = load.detection && !('error' in load.detection) ? load.detection : null;
  const space = load.spaceCharge && !('error' in load.spaceCharge) ? load.spaceCharge : null;
  const d = detection?.species[s];
  const c = space?.species[s];
  const r = detection ? (d?.measured?.resolvingPower ?? null) : (c?.spectrumResolvingPower ?? c?.resolvingPower ?? null);
  const shifts = [detection ? (d?.peakShift_ppm ?? null) : 0, space ? (c?.shift_ppm ?? null) : 0];
  return { r, shift: shifts.some((x) => x === null) ? null : (shifts as number[]).reduce((a, b) => a + b, 0) };
}

export function figureWords(preset: Preset): string {
  const load = preset.ionLoad;
  if (load?.detection) return `R of the recorded peak (${load.detection.mode} detection${load.spaceCharge ? ', with space charge' : ''})`;
  return preset.acquisition ? 'R of the spectrum peak (space charge)' : 'R of the ion arrival times (space charge, ideal detector)';
}

/** Gather the points' reports (in the order of `ionsPerShot`) into per-species curves. Throws with a reason when a point has no load section. */
export function loadCurve(preset: Preset, ionsPerShot: readonly number[], reports: readonly RunReport[]): LoadCurve {
  let species: LoadCurveSpecies[] | null = null;
  reports.forEach((report, k) => {
    const load = report.ionLoad;
    if (!load) throw new Error(`the run at ${ionsPerShot[k]} ions per shot has no ion-load section`);
    for (const section of [load.detection, load.spaceCharge]) {
      if (section && 'error' in section) throw new Error(`at ${ionsPerShot[k]} ions per shot: ${section.error}`);
    }
    // The load sections list the traced peaks (an isotope envelope's peaks each), the same at every point.
    const listed = (load.detection && !('error' in load.detection) ? load.detection.species : null) ?? (load.spaceCharge && !('error' in load.spaceCharge) ? load.spaceCharge.species : []);
    species ??= listed.map((sp) => ({ label: sp.label, mz: sp.mz, resolvingPower: [], shift_ppm: [] }));
    species.forEach((s, i) => {
      const f = speciesFigures(load, i);
      s.resolvingPower.push(f.r);
      s.shift_ppm.push(f.shift);
    });
  });
  return { ionsPerShot: [...ionsPerShot], species: species ?? [], figure: figureWords(preset) };
}
