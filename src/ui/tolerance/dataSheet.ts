/**
 * The "apply tolerances from the instrument's data sheet" form as data: one field per key of the
 * preset's tolerances section that applies to this analyser, read from the working setup and
 * written back as a new, validated preset (the working setup is never changed in place).
 */
import { validatePreset } from '../../presets/load';
import type { PresetResult } from '../../presets/issues';
import type { Preset } from '../../presets/schema';
import { TOLERANCE_LIMITS } from '../../presets/toleranceSchema';
import { MATERIALS } from '../../tolerance/materials';
import { toleranceParameters, toleranceSettings } from '../../tolerance/parameters';

export interface DataSheetField {
  /** Path below the preset root, e.g. `tolerances.supplies.repeller.drift_ppm`. */
  readonly path: string;
  readonly label: string;
  readonly kind: 'number' | 'material';
  readonly min: number;
  readonly max: number;
  readonly step: number;
}

const limitFor = (path: string): { min: number; max: number } => {
  if (path.endsWith('_ppm')) return TOLERANCE_LIMITS.ppm;
  if (path.endsWith('_ns')) return TOLERANCE_LIMITS.ns;
  if (path.endsWith('_K')) return TOLERANCE_LIMITS.temperature_K;
  if (path.endsWith('_um')) return TOLERANCE_LIMITS.position_um;
  if (path.endsWith('_mrad')) return TOLERANCE_LIMITS.tilt_mrad;
  return TOLERANCE_LIMITS.ppm;
};

const UNIT_TEXT: Record<string, string> = { ppm: 'ppm', ns: 'ns', K: 'K', µm: 'µm', mrad: 'mrad' };

/** The form's fields for this analyser: its tolerance parameters, the materials and the target. */
export function dataSheetFields(preset: Preset): DataSheetField[] {
  const fields: DataSheetField[] = toleranceParameters(preset).map((p) => {
    const lim = limitFor(p.settingPath);
    const rms = p.kind === 'shot' ? ' rms' : '';
    return { path: p.settingPath, label: `${p.label.replace(/ \(α = .*\)$/, '')} (${UNIT_TEXT[p.unit]}${rms}, 1 sd)`, kind: 'number', min: lim.min, max: lim.max, step: 0.01 };
  });
  fields.push({ path: 'tolerances.temperature.tubeMaterial', label: 'flight-tube material', kind: 'material', min: 0, max: 0, step: 0 });
  if (fields.some((f) => f.path === 'tolerances.temperature.mirror_K')) {
    fields.push({ path: 'tolerances.temperature.mirrorMaterial', label: 'mirror-stack material', kind: 'material', min: 0, max: 0, step: 0 });
  }
  fields.push({
    path: 'tolerances.target.massAccuracy_ppm',
    label: 'target mass accuracy (ppm, 1 sd)',
    kind: 'number',
    min: TOLERANCE_LIMITS.massAccuracy_ppm.min,
    max: TOLERANCE_LIMITS.massAccuracy_ppm.max,
    step: 0.1,
  });
  return fields;
}

export const MATERIAL_CHOICES = MATERIALS.map((m) => ({ value: m.name, text: `${m.label} (${(m.expansion_per_K * 1e6).toFixed(1)}e-6/K, from memory)` }));

function getPath(doc: unknown, path: string): unknown {
  let node: unknown = doc;
  for (const key of path.split('.')) {
    if (typeof node !== 'object' || node === null || !Object.hasOwn(node, key)) return undefined;
    node = (node as Record<string, unknown>)[key];
  }
  return node;
}

/** Current values of the fields (defaults where the section leaves them out). */
export function readDataSheet(preset: Preset): Record<string, string> {
  const doc = { tolerances: toleranceSettings(preset) };
  const out: Record<string, string> = {};
  for (const f of dataSheetFields(preset)) {
    const v = getPath(doc, f.path);
    out[f.path] = v === undefined ? '' : String(v);
  }
  return out;
}

/**
 * A copy of the preset with the form's values as its tolerances section, validated like a loaded
 * file (bad values come back as issues naming the field). Empty fields are left out (defaults apply;
 * an empty target removes the target).
 */
export function applyDataSheet(preset: Preset, values: Readonly<Record<string, string>>): PresetResult<Preset> {
  const doc = JSON.parse(JSON.stringify(preset)) as Record<string, unknown>;
  const section = JSON.parse(JSON.stringify(preset.tolerances ?? {})) as Record<string, unknown>;
  delete section.target;
  const fields = dataSheetFields(preset);
  for (const f of fields) {
    const text = (values[f.path] ?? '').trim();
    const keys = f.path.split('.').slice(1);
    const last = keys[keys.length - 1];
    let node: Record<string, unknown> | null = section;
    for (const key of keys.slice(0, -1)) {
      if (typeof node[key] !== 'object' || node[key] === null) {
        if (text === '') {
          node = null; // nothing to clear below an absent section
          break;
        }
        node[key] = {};
      }
      node = node[key] as Record<string, unknown>;
    }
    if (node === null) continue;
    if (text === '') {
      delete node[last];
      continue;
    }
    const value = f.kind === 'material' ? text : Number(text);
    // A value that is not a number is passed on as text, so validation names the field.
    node[last] = typeof value === 'number' && !Number.isFinite(value) ? text : value;
  }
  const target = section.target as Record<string, unknown> | undefined;
  if (target && preset.tolerances?.target) {
    for (const key of ['fromMz', 'toMz'] as const) if (preset.tolerances.target[key] !== undefined) target[key] = preset.tolerances.target[key];
  }
  doc.tolerances = section;
  return validatePreset(doc);
}
