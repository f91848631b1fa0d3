/**
 * Validation of a scan document before it is merged: every field's type (a strict schema, so a string
 * flight time or an unknown key is refused), the axes and the point count they imply, each point's
 * values against the values its index has on the axes, a shard's points against the shard's share,
 * and the species list being the same at every point. Problems come back one per line as
 * `{ path: "<file>: <json path>", message }`, as the preset loader gives them; nothing is merged
 * unless every document passes. Consistency between documents (same preset fingerprint, seed, ions,
 * objective and axes; no point twice, none missing) is checked by mergeScanDocuments.
 */
import { z } from 'zod';
import { jsonPath, type PresetIssue } from '../presets/issues';
import { stripByteOrderMark } from '../presets/textInput';
import type { ScanAxis } from './api';
import { OBJECTIVE_NAMES } from './objective';
import { SCAN_FORMAT, SCAN_FORMAT_VERSION, type ScanDocument } from './scanDocument';
import { axisValues, MAX_SCAN_AXES, MAX_SCAN_POINTS, pointValues, shardIndices } from './scanPlan';
import { TuningInputError } from './errors';

/** Largest scan file read (characters), near the longest string a JavaScript engine holds. */
export const MAX_SCAN_FILE_CHARS = 500_000_000;
/** Problems listed per file before the rest are summarised in one line. */
const MAX_ISSUES_PER_FILE = 12;

const finite = z.number().refine(Number.isFinite, 'must be a finite number');
const nullableFinite = finite.nullable();
const wholeNumber = z.number().int('must be a whole number');

const axisSchema = z.strictObject({
  path: z.string().min(1),
  from: finite.optional(),
  to: finite.optional(),
  steps: wholeNumber.min(1).optional(),
  values: z.array(finite).min(1).optional(),
});

const speciesSchema = z.strictObject({
  mz: finite.refine((x) => x > 0, 'must be a positive m/z'),
  label: z.string().optional(),
  flightTime_ns: nullableFinite,
  fwhm_ns: nullableFinite,
  resolvingPower: nullableFinite,
  transmission: finite.refine((x) => x >= 0 && x <= 1, 'must be a fraction from 0 to 1'),
  sdFlightTime_ns: nullableFinite.optional(),
  fwhmShortest_ns: nullableFinite.optional(),
  resolvingPowerShortest: nullableFinite.optional(),
  spectrumFwhm_ns: nullableFinite.optional(),
  spectrumResolvingPower: nullableFinite.optional(),
});

const pointSchema = z.strictObject({
  index: wholeNumber.min(0),
  values: z.array(finite).min(1).max(MAX_SCAN_AXES),
  species: z.array(speciesSchema).min(1),
  objective: nullableFinite,
});

const objectiveSchema = z.strictObject({
  name: z.enum(OBJECTIVE_NAMES as [string, ...string[]]),
  targetMz: finite.optional(),
  range: z.tuple([finite, finite]).optional(),
});

export const scanDocumentSchema = z.strictObject({
  format: z.literal(SCAN_FORMAT),
  version: z.literal(SCAN_FORMAT_VERSION),
  preset: z.string(),
  presetDigest: z.string().regex(/^[0-9a-f]{8}$/, 'must be the 8-hex-digit preset fingerprint the scan wrote'),
  ions: wholeNumber.min(1),
  seed: wholeNumber.min(0),
  objective: objectiveSchema.nullable(),
  axes: z.array(axisSchema).min(1).max(MAX_SCAN_AXES),
  totalPoints: wholeNumber.min(1).max(MAX_SCAN_POINTS),
  shard: z.strictObject({ index: wholeNumber.min(0), count: wholeNumber.min(1) }).nullable(),
  points: z.array(pointSchema),
  criterion: z.enum(['spectrum', 'ideal']).optional(),
});

export type ScanDocumentCheck = { ok: true; doc: ScanDocument } | { ok: false; issues: PresetIssue[] };

/** Parse and validate one scan file's text; `label` (the file name) starts every message. */
export function validateScanText(text: string, label: string): ScanDocumentCheck {
  if (text.length > MAX_SCAN_FILE_CHARS) return fail(label, '(file)', `is larger than ${MAX_SCAN_FILE_CHARS} characters`);
  let doc: unknown;
  try {
    doc = JSON.parse(stripByteOrderMark(text));
  } catch (err) {
    return fail(label, '(file)', `is not valid JSON: ${(err as Error).message}`);
  }
  return validateScanDocument(doc, label);
}

export function validateScanDocument(doc: unknown, label: string): ScanDocumentCheck {
  const d = doc as { format?: unknown; version?: unknown } | null;
  if (typeof d !== 'object' || d === null || Array.isArray(d) || d.format !== SCAN_FORMAT) {
    return fail(label, '(top level)', `is not a scan file (no "format": "${SCAN_FORMAT}"); write one with --scan ... --json or --write`);
  }
  if (d.version !== SCAN_FORMAT_VERSION) return fail(label, 'version', `is ${JSON.stringify(d.version)}; this tool reads scan format version ${SCAN_FORMAT_VERSION}`);
  const parsed = scanDocumentSchema.safeParse(doc);
  if (!parsed.success) return { ok: false, issues: capped(label, parsed.error.issues.map((i) => ({ path: jsonPath(i.path), message: i.message }))) };
  const issues = checkContent(parsed.data as ScanDocument);
  return issues.length ? { ok: false, issues: capped(label, issues) } : { ok: true, doc: parsed.data as ScanDocument };
}

/** The checks a schema cannot express: axes ↔ totalPoints, values ↔ index, shard ↔ indices, species lists alike. */
function checkContent(doc: ScanDocument): PresetIssue[] {
  const issues: PresetIssue[] = [];
  const values: number[][] = [];
  doc.axes.forEach((axis: ScanAxis, a) => {
    try {
      values.push(axisValues(axis, `axes[${a}]`));
    } catch (err) {
      issues.push({ path: `axes[${a}]`, message: err instanceof TuningInputError ? err.reason : String(err) });
    }
  });
  if (issues.length) return issues;
  const resolved = doc.axes.map((axis, a) => ({ path: axis.path, values: values[a] }));
  const total = values.reduce((n, v) => n * v.length, 1);
  if (doc.totalPoints !== total) return [{ path: 'totalPoints', message: `is ${doc.totalPoints}, but the axes give ${total} points` }];
  if (doc.shard && doc.shard.index >= doc.shard.count) issues.push({ path: 'shard.index', message: `is ${doc.shard.index}, outside 0..${doc.shard.count - 1} (0-based)` });
  // Species are compared by count and label, not m/z: a scan may vary a species' m/z.
  const first = doc.points[0]?.species.map((s) => s.label ?? '').join('\u0000');
  const seen = new Set<number>();
  doc.points.forEach((p, k) => {
    const at = `points[${k}]`;
    if (p.index >= total) {
      issues.push({ path: `${at}.index`, message: `is ${p.index}, outside the scan's points 0..${total - 1}` });
      return;
    }
    if (seen.has(p.index)) issues.push({ path: `${at}.index`, message: `repeats point ${p.index}` });
    seen.add(p.index);
    if (doc.shard && p.index % doc.shard.count !== doc.shard.index) {
      issues.push({ path: `${at}.index`, message: `point ${p.index} does not belong to shard ${doc.shard.index + 1}/${doc.shard.count}` });
    }
    if (p.values.length !== doc.axes.length) {
      issues.push({ path: `${at}.values`, message: `has ${p.values.length} value(s) for ${doc.axes.length} axis/axes` });
    } else {
      const expected = pointValues(resolved, p.index);
      p.values.forEach((v, a) => {
        if (v !== expected[a]) issues.push({ path: `${at}.values[${a}]`, message: `is ${v}, but point ${p.index} of the scan has ${doc.axes[a].path} = ${expected[a]}` });
      });
    }
    const list = p.species.map((s) => s.label ?? '').join('\u0000');
    if (list !== first || p.species.length !== doc.points[0].species.length) issues.push({ path: `${at}.species`, message: 'lists other species than points[0]' });
  });
  if (!issues.length && doc.shard && doc.shard.index < doc.shard.count) {
    const missing = shardIndices(total, doc.shard).filter((i) => !seen.has(i));
    if (missing.length) {
      issues.push({ path: 'points', message: `shard ${doc.shard.index + 1}/${doc.shard.count} lacks ${missing.length} of its points (first indices ${missing.slice(0, 10).join(', ')})` });
    }
  }
  return issues;
}

function capped(label: string, issues: readonly PresetIssue[]): PresetIssue[] {
  const shown = issues.slice(0, MAX_ISSUES_PER_FILE).map((i) => ({ path: `${label}: ${i.path}`, message: i.message }));
  if (issues.length > MAX_ISSUES_PER_FILE) shown.push({ path: label, message: `and ${issues.length - MAX_ISSUES_PER_FILE} more problems` });
  return shown;
}

const fail = (label: string, path: string, message: string): ScanDocumentCheck => ({ ok: false, issues: [{ path: `${label}: ${path}`, message }] });
