/**
 * The saved form of a scan (what `--json` prints and `--write` saves), and the merge of shards.
 * A document names the preset by a digest of its validated content, so shards of different presets,
 * seeds, ion counts, objectives or axes are refused instead of being joined.
 */
import type { Preset } from '../presets/schema';
import type { Objective, ResolvingPowerCriterion, ScanAxis, ScanPoint, ScanResult } from './api';
import { TuningInputError } from './errors';

export const SCAN_FORMAT = 'tof-scan';
export const SCAN_FORMAT_VERSION = 1;

export interface ScanDocument {
  readonly format: typeof SCAN_FORMAT;
  readonly version: typeof SCAN_FORMAT_VERSION;
  readonly preset: string;
  readonly presetDigest: string;
  readonly ions: number;
  readonly seed: number;
  readonly objective: Objective | null;
  readonly axes: readonly ScanAxis[];
  readonly totalPoints: number;
  readonly shard: { readonly index: number; readonly count: number } | null;
  readonly points: readonly ScanPoint[];
  /** Which R the objective read (absent in files written before it was recorded: the ideal-detector R). */
  readonly criterion?: ResolvingPowerCriterion;
}

/** FNV-1a (32-bit) of a text, as 8 hex digits: enough to tell presets apart, not a security measure. */
export function fnv1a32(text: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(16).padStart(8, '0');
}

export function presetDigest(preset: Preset): string {
  return fnv1a32(JSON.stringify(preset));
}

export function scanDocument(preset: Preset, result: ScanResult): ScanDocument {
  return {
    format: SCAN_FORMAT,
    version: SCAN_FORMAT_VERSION,
    preset: preset.name,
    presetDigest: presetDigest(preset),
    ions: result.ions ?? preset.run.ions,
    seed: result.seed ?? preset.run.seed,
    objective: result.objective ?? null,
    axes: result.axes,
    totalPoints: result.totalPoints,
    shard: result.shard ?? null,
    points: result.points,
    criterion: result.criterion ?? 'ideal',
  };
}

/** A parsed document is validated before merging by ./mergeValidation (validateScanText). */

const sameScan = (a: ScanDocument, b: ScanDocument): string | null => {
  if (a.presetDigest !== b.presetDigest) return 'a different preset';
  if (a.ions !== b.ions) return `a different ion count (${b.ions} vs ${a.ions})`;
  if (a.seed !== b.seed) return `a different seed (${b.seed} vs ${a.seed})`;
  if (JSON.stringify(a.objective) !== JSON.stringify(b.objective)) return 'a different objective';
  if ((a.criterion ?? 'ideal') !== (b.criterion ?? 'ideal')) return `a different R criterion (${b.criterion ?? 'ideal'} vs ${a.criterion ?? 'ideal'})`;
  if (JSON.stringify(a.axes) !== JSON.stringify(b.axes) || a.totalPoints !== b.totalPoints) return 'different scan axes';
  return null;
};

/** Join shards of one scan into the complete scan (points in index order). */
export function mergeScanDocuments(docs: readonly { readonly label: string; readonly doc: ScanDocument }[]): ScanDocument {
  if (docs.length === 0) throw new TuningInputError('merge', 'give the scan files to merge');
  const first = docs[0].doc;
  const owner = new Map<number, string>();
  const points: ScanPoint[] = [];
  for (const { label, doc } of docs) {
    const differs = sameScan(first, doc);
    if (differs) throw new TuningInputError(label, `belongs to another scan than ${docs[0].label}: ${differs}`);
    for (const p of doc.points) {
      const seen = owner.get(p.index);
      if (seen !== undefined) throw new TuningInputError(label, `repeats point ${p.index}, already in ${seen} (the same shard given twice?)`);
      owner.set(p.index, label);
      points.push(p);
    }
  }
  if (points.length !== first.totalPoints) {
    const missing: number[] = [];
    for (let i = 0; i < first.totalPoints && missing.length < 10; i++) if (!owner.has(i)) missing.push(i);
    const count = first.shard?.count;
    const shards = count ? [...new Set(missing.map((i) => (i % count) + 1))].map((s) => `${s}/${count}`).join(', ') : '';
    throw new TuningInputError('merge', `${first.totalPoints - points.length} of ${first.totalPoints} points are missing (first indices ${missing.join(', ')}${shards ? `; shard ${shards} not given?` : ''})`);
  }
  points.sort((a, b) => a.index - b.index);
  return { ...first, shard: null, points };
}
