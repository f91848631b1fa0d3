/**
 * Switching a setup between linear and reflectron mode for a fair comparison. A linear setup gets a
 * dual-stage mirror of the template's geometry whose two potentials meet the Mamyrin et al. (1973)
 * second-order conditions for the ions this source makes, and, with delayed extraction, the delay
 * of first-order time-lag focus through that mirror (Wiley & McLaren 1955; Vestal et al. 1995): the
 * start values the auto-tune computes (./analyticStarts). Keeping the linear delay and the
 * template's potentials instead would compare a tuned linear setup with an untuned reflectron.
 * The untuned variant is returned too, so it can still be compared, clearly marked.
 */
import type { Preset } from '../presets/schema';
import type { Objective, TuneParameter, TuneRequest, TuneResult } from './api';
import { analyticStart, referenceMz } from './analyticStarts';
import { withValues } from './paramPath';

export interface ModeSwitch {
  /** The other-mode setup with the tuned mirror and delay (reflectron), or the straight flight (linear). */
  readonly preset: Preset;
  /** The same switch with the template's potentials and the original delay (not tuned). */
  readonly untuned: Preset;
  /** What was changed, one line each, for the reader. */
  readonly changes: string[];
  /** True when every proposed value came from a published condition. */
  readonly tuned: boolean;
}

/** Same source, ions and run; linear ↔ reflectron, untuned: the template's mirror and drift, or the same total path straight. */
export function switchModeUntuned(preset: Preset, reflectronTemplate: Preset): Preset {
  const next = structuredClone(preset);
  if (preset.mirror.type === 'none') {
    next.mirror = structuredClone(reflectronTemplate.mirror);
    next.drift = { ...next.drift, length_mm: reflectronTemplate.drift.length_mm };
    next.name = `${preset.name} — reflectron`.slice(0, 120);
  } else {
    next.mirror = { type: 'none' };
    next.drift = { ...next.drift, length_mm: preset.drift.length_mm + preset.mirror.returnLength_mm };
    next.name = `${preset.name} — linear`.slice(0, 120);
  }
  return next;
}

const fmt = (x: number): string => Number(x.toPrecision(6)).toString();

export function switchMode(preset: Preset, reflectronTemplate: Preset): ModeSwitch {
  const untuned = switchModeUntuned(preset, reflectronTemplate);
  if (preset.mirror.type !== 'none' || untuned.mirror.type !== 'dual') {
    const changes =
      preset.mirror.type !== 'none'
        ? [`mirror removed; drift lengthened to ${untuned.drift.length_mm} mm (the same total path); delay and source kept`]
        : [`mirror of the template set (${untuned.mirror.type}); potentials not tuned (no published condition for this mirror type here)`];
    return { preset: untuned, untuned: { ...untuned, name: `${untuned.name} (untuned)`.slice(0, 120) }, changes, tuned: false };
  }
  const repeller = Math.abs(preset.source.repeller.potential_V);
  const sign = preset.polarity === 'positive' ? 1 : -1;
  const drift = preset.drift.potential_V;
  // Bounds only bracket the roots: the mirror steps lie between the drift potential and 1.5× the source potential.
  const parameters: TuneParameter[] = [
    { path: 'mirror.intermediateGrid_V', min: Math.min(drift, drift + sign * 1.5 * repeller), max: Math.max(drift, drift + sign * 1.5 * repeller) },
    { path: 'mirror.backPlate_V', min: Math.min(drift, drift + sign * 1.5 * repeller), max: Math.max(drift, drift + sign * 1.5 * repeller) },
  ];
  if (untuned.source.extraction.mode === 'delayed') parameters.push({ path: 'source.extraction.delay_ns', min: 0, max: 5000 });
  const middle = untuned.ions.species[Math.floor((untuned.ions.species.length - 1) / 2)];
  const objective = { name: 'max-r-at-mz' as const, targetMz: middle.mz };
  const current = parameters.map((p) => {
    if (p.path === 'source.extraction.delay_ns') return untuned.source.extraction.mode === 'delayed' ? untuned.source.extraction.delay_ns : 0;
    const m = untuned.mirror;
    return m.type === 'dual' ? (p.path === 'mirror.backPlate_V' ? m.backPlate_V : m.intermediateGrid_V) : 0;
  });
  const start = analyticStart(untuned, parameters, objective, current);
  const solvedMirror = start.sources.some((s) => s.includes('second-order'));
  const chosen = parameters.map((p, i) => (solvedMirror || p.path === 'source.extraction.delay_ns' ? start.values[i] : current[i]));
  const applied = withValues(untuned, parameters.map((p) => p.path), chosen);
  if (!applied.ok) {
    return { preset: untuned, untuned: { ...untuned, name: `${untuned.name} (untuned)`.slice(0, 120) }, changes: ['mirror of the template set; the published conditions gave no valid setting, so nothing was tuned'], tuned: false };
  }
  const units: Record<string, string> = { 'source.extraction.delay_ns': 'ns', 'mirror.intermediateGrid_V': 'V', 'mirror.backPlate_V': 'V' };
  const changes = [
    `dual-stage mirror of the template (${reflectronTemplate.name}): drift ${untuned.drift.length_mm} mm, stages ${untuned.mirror.deceleratingLength_mm} + ${untuned.mirror.reflectingLength_mm} mm, return ${untuned.mirror.returnLength_mm} mm`,
    ...parameters.map((p, i) => `${p.path}: ${fmt(current[i])} → ${fmt(chosen[i])} ${units[p.path]}`),
    `values from: ${start.sources.length ? start.sources.join('; ') : 'none (kept)'}; reference ion m/z ${fmt(referenceMz(objective, untuned))}`,
  ];
  return {
    preset: { ...applied.value, name: `${preset.name} — reflectron (tuned mirror)`.slice(0, 120) },
    untuned: { ...untuned, name: `${untuned.name} (untuned mirror, linear delay)`.slice(0, 120) },
    changes,
    tuned: solvedMirror,
  };
}

/**
 * The auto-tune that finishes a switch to reflectron mode: both mirror potentials and the delay
 * together, started from the published conditions above, for the best least spectrum R over the
 * species' m/z range. The second-order mirror alone leaves the delayed-extraction source nothing to
 * focus with (its time-lag condition then has no root), so the optimum sits off it; only the
 * simulation finds where.
 */
export function reflectronTuneRequest(sw: ModeSwitch, options: { readonly ions?: number; readonly restarts?: number } = {}): TuneRequest | null {
  const p = sw.preset;
  if (p.mirror.type !== 'dual') return null;
  const U = Math.abs(p.source.repeller.potential_V - p.drift.potential_V);
  const sign = p.polarity === 'positive' ? 1 : -1;
  const at = (f: number): number => p.drift.potential_V + sign * f * U;
  const span = (lo: number, hi: number): { min: number; max: number } => ({ min: Math.min(at(lo), at(hi)), max: Math.max(at(lo), at(hi)) });
  const parameters: TuneParameter[] = [
    { path: 'mirror.intermediateGrid_V', ...span(0.3, 0.95) },
    { path: 'mirror.backPlate_V', ...span(0.9, 1.4) },
  ];
  if (p.source.extraction.mode === 'delayed') parameters.push({ path: 'source.extraction.delay_ns', min: 0, max: Math.max(1000, 3 * p.source.extraction.delay_ns) });
  const mzs = p.ions.species.map((s) => s.mz);
  const objective: Objective =
    mzs.length > 1 ? { name: 'max-min-r-over-range', range: [Math.min(...mzs), Math.max(...mzs)] } : { name: 'max-r-at-mz', targetMz: mzs[0] };
  return { preset: p, parameters, objective, ions: options.ions ?? Math.min(4000, p.run.ions), seed: p.run.seed, restarts: options.restarts ?? 1 };
}

/** The switch with the tune's result applied, and the changes said from the original setup. */
export function applyReflectronTune(original: Preset, sw: ModeSwitch, request: TuneRequest, result: TuneResult): ModeSwitch {
  const before = (path: string): number => {
    if (path === 'source.extraction.delay_ns') return original.source.extraction.mode === 'delayed' ? original.source.extraction.delay_ns : 0;
    const m = sw.untuned.mirror;
    return m.type === 'dual' ? (path === 'mirror.backPlate_V' ? m.backPlate_V : m.intermediateGrid_V) : NaN;
  };
  const units = (path: string): string => (path.endsWith('_ns') ? 'ns' : 'V');
  const changes = [
    sw.changes[0],
    ...request.parameters.map((p, i) => `${p.path}: ${fmt(before(p.path))} → ${fmt(result.best[i])} ${units(p.path)}`),
    `tuned with this tool's auto-tune (${result.evaluations} evaluations, ${request.ions} ions each, seed ${request.seed}), started from: ${(result.startSource ?? []).join('; ') || 'the template values'}`,
  ];
  return { ...sw, preset: { ...result.tunedPreset, name: sw.preset.name }, changes, tuned: true };
}
