/**
 * Cross-field checks of the tolerances section: a tolerance given for a part the analyser does not
 * have (or whose geometry is solved, where a micrometre change is below the mesh) would be silently
 * ignored, so it is refused with the field's path instead.
 */
import type { PresetIssue } from '../presets/issues';
import type { Preset } from '../presets/schema';
import { toleranceParameters } from './parameters';

export function checkTolerances(preset: Preset): PresetIssue[] {
  const tol = preset.tolerances;
  if (!tol) return [];
  const issues: PresetIssue[] = [];
  const known = new Set(toleranceParameters(preset).map((p) => p.settingPath));
  const given: [string, number][] = [];
  for (const [name, s] of Object.entries(tol.supplies)) {
    if (!s) continue;
    given.push([`tolerances.supplies.${name}.drift_ppm`, s.drift_ppm], [`tolerances.supplies.${name}.ripple_ppm`, s.ripple_ppm]);
  }
  given.push(['tolerances.timing.delayOffset_ns', tol.timing.delayOffset_ns], ['tolerances.timing.delayJitter_ns', tol.timing.delayJitter_ns]);
  given.push(['tolerances.temperature.mirror_K', tol.temperature.mirror_K]);
  for (const [name, v] of Object.entries(tol.positions)) given.push([`tolerances.positions.${name}`, v]);
  for (const [path, value] of given) {
    if (value > 0 && !known.has(path)) {
      issues.push({ path, message: 'applies to no part of this analyser (absent, at 0 V, static extraction, or inside a solved-field region); remove it or set it to 0' });
    }
  }
  const t = tol.target;
  if (t && t.fromMz !== undefined && t.toMz !== undefined && t.fromMz > t.toMz) {
    issues.push({ path: 'tolerances.target.fromMz', message: `must be ≤ tolerances.target.toMz (${t.toMz})` });
  }
  return issues;
}
