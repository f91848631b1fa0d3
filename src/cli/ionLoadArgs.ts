/**
 * The ion-load options of a plain run: `--ions-per-shot N` (mean ions per shot; adds an `ionLoad`
 * section when the preset has none) and `--ions-per-shot-sweep A,B,...` (the R-versus-load curve,
 * needs `ionLoad.spaceCharge`), and the table text of the `detection` and `spaceCharge` sections.
 */
import type { PresetIssue } from '../presets/issues';
import { validatePreset } from '../presets/load';
import { ION_LOAD_LIMITS } from '../presets/ionLoadSchema';
import type { Preset } from '../presets/schema';
import type { IonLoadReport } from '../simulation/ionLoad';

export const ION_LOAD_USAGE = `  --ions-per-shot N          mean ions per shot (${ION_LOAD_LIMITS.ionsPerShot.min}..${ION_LOAD_LIMITS.ionsPerShot.max}); overrides or adds "ionLoad"
                             (in --json: "detection" and "spaceCharge" sections)
  --ions-per-shot-sweep A,B  ions-per-shot values for the R-versus-load curve (needs "ionLoad.spaceCharge")`;

export interface IonLoadArgs {
  ionsPerShot?: number;
  sweep?: number[];
}

const inRange = (x: number): boolean => Number.isFinite(x) && x > ION_LOAD_LIMITS.ionsPerShot.min - 1e-15 && x <= ION_LOAD_LIMITS.ionsPerShot.max;
const rangeText = `must be a number from ${ION_LOAD_LIMITS.ionsPerShot.min} to ${ION_LOAD_LIMITS.ionsPerShot.max}`;

/** Takes `argv[i]` (and its value) when it is an ion-load option; returns how many arguments it used (0 = not ours). */
export function takeIonLoadArg(argv: readonly string[], i: number, into: IonLoadArgs, issues: PresetIssue[]): number {
  const arg = argv[i];
  if (arg !== '--ions-per-shot' && arg !== '--ions-per-shot-sweep') return 0;
  const text = argv[i + 1];
  if (arg === '--ions-per-shot') {
    const value = Number(text);
    if (text === undefined || !inRange(value)) issues.push({ path: arg, message: `${rangeText} (got ${text ?? 'nothing'})` });
    else into.ionsPerShot = value;
    return 2;
  }
  const values = (text ?? '').split(',').map(Number);
  if (text === undefined || values.length > ION_LOAD_LIMITS.sweepPoints.max || !values.every(inRange)) {
    issues.push({ path: arg, message: `needs up to ${ION_LOAD_LIMITS.sweepPoints.max} comma-separated values, each ${rangeText} (got ${text ?? 'nothing'})` });
  } else into.sweep = values;
  return 2;
}

/** The preset with the command-line ion load applied, validated again (cross-field checks included). */
export function applyIonLoadArgs(preset: Preset, args: IonLoadArgs): { ok: true; value: Preset } | { ok: false; issues: PresetIssue[] } {
  if (args.ionsPerShot === undefined && args.sweep === undefined) return { ok: true, value: preset };
  const load = preset.ionLoad ?? { ionsPerShot: args.ionsPerShot ?? 1, countLaw: 'poisson' as const };
  const next = {
    ...preset,
    ionLoad: { ...load, ...(args.ionsPerShot !== undefined ? { ionsPerShot: args.ionsPerShot } : {}), ...(args.sweep ? { sweepIonsPerShot: args.sweep } : {}) },
  };
  return validatePreset(next);
}

const f = (x: number | null | undefined, digits = 0): string => (x === null || x === undefined ? '—' : x.toFixed(digits));

/** Readable lines for the table output. */
export function formatIonLoad(r: IonLoadReport): string {
  const lines = [`Ion load: ${r.ionsPerShot} ions per shot (${r.countLaw}), ${r.shots} shots`];
  const d = r.detection;
  if (d && 'error' in d) lines.push(`  detection: ${d.error}`);
  else if (d) {
    lines.push(
      d.mode === 'counting'
        ? `  counting detection: dead time ${d.deadTime_ns} ns, ${d.channels} channel(s), ${d.trials} trials`
        : `  analog detection: ${d.clippedSamples} samples clipped by saturation`,
    );
    for (const s of d.species) {
      const base = `    ${s.label} (m/z ${s.mz.toFixed(4)}): efficiency ${(100 * s.detectionEfficiency).toFixed(1)} %, R measured ${f(s.measured?.resolvingPower)} (ideal detector ${f(s.ideal?.resolvingPower)})`;
      lines.push(
        d.mode === 'counting'
          ? `${base}, lost ${(100 * s.countsLostFraction).toFixed(1)} %, shift ${f(s.peakShift_ns, 3)} ns (${f(s.peakShift_ppm, 1)} ppm), corrected: area ${f(s.correctedAreaRatio === null ? null : 100 * s.correctedAreaRatio, 1)} %, shift ${f(s.correctedShift_ns, 3)} ns (${f(s.correctedShift_ppm, 1)} ppm)`
          : `${base}, area ${f(s.measured && s.ideal ? (100 * s.measured.area) / s.ideal.area : null, 1)} % of ideal`,
      );
    }
  }
  const c = r.spaceCharge;
  if (c && 'error' in c) lines.push(`  space charge: ${c.error}`);
  else if (c) {
    lines.push(`  space charge (beam radius ${c.beamRadius_mm} mm, largest shot ${c.largestShot} ions, ${c.sheetEvents} sheet events):`);
    for (const s of c.species) {
      lines.push(`    ${s.label}: R ${f(s.spectrumResolvingPower ?? s.resolvingPower)} (alone ${f(s.alone.spectrumResolvingPower ?? s.alone.resolvingPower)}), flight-time shift ${f(s.shift_ns, 3)} ns (${f(s.shift_ppm, 1)} ppm)`);
    }
    if (c.sweep.length > 1) {
      lines.push('    R versus ions per shot: ' + c.sweep.map((p) => `${p.ionsPerShot}: ${p.species.map((s) => f(s.spectrumResolvingPower ?? s.resolvingPower)).join('/')}`).join(', '));
    }
  }
  return lines.join('\n') + '\n';
}
