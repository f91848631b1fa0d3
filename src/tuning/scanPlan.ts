/**
 * The points of a scan: each axis expands to a list of values (an inclusive range of `steps` points,
 * or an explicit list), a 2-D scan is their grid with the first axis varying slowest, and a shard
 * is a deterministic share of the point indices (every `count`-th point from `index`).
 * Every value is checked up front by validating the modified preset, so a bad range is reported
 * against the argument that asked for it, before any work starts.
 */
import { formatIssues } from '../presets/issues';
import type { Preset } from '../presets/schema';
import type { ScanAxis } from './api';
import { TuningInputError } from './errors';
import { numberAt, withValues } from './paramPath';

/** Largest number of points in one scan (all shards together). */
export const MAX_SCAN_POINTS = 1_000_000;
export const MAX_SCAN_AXES = 2;

export interface ResolvedAxis {
  readonly path: string;
  readonly values: readonly number[];
}

/** Values of one axis: `steps` points from `from` to `to` inclusive, or the explicit list. */
export function axisValues(axis: ScanAxis, label: string): number[] {
  if (axis.values !== undefined) {
    if (axis.from !== undefined || axis.to !== undefined || axis.steps !== undefined) {
      throw new TuningInputError(label, 'give either a range (from, to, steps) or a list of values, not both');
    }
    if (axis.values.length === 0) throw new TuningInputError(label, 'the list of values is empty');
    for (const v of axis.values) if (!Number.isFinite(v)) throw new TuningInputError(label, `value ${v} is not a finite number`);
    return [...axis.values];
  }
  const { from, to, steps } = axis;
  if (from === undefined || to === undefined || steps === undefined) {
    throw new TuningInputError(label, 'needs from, to and steps (e.g. path=0:300:31) or a list of values');
  }
  if (!Number.isFinite(from) || !Number.isFinite(to)) throw new TuningInputError(label, `range ends must be finite numbers (got ${from}:${to})`);
  if (!Number.isInteger(steps) || steps < 1) {
    throw new TuningInputError(label, `steps must be a whole number of points ≥ 1 (got ${steps})`);
  }
  if (steps === 1) {
    if (from !== to) throw new TuningInputError(label, `one step scans a single value: from and to must be equal (got ${from}:${to}), or use ≥ 2 steps`);
    return [from];
  }
  if (steps > MAX_SCAN_POINTS) throw new TuningInputError(label, `steps must be ≤ ${MAX_SCAN_POINTS} (got ${steps})`);
  const out = new Array<number>(steps);
  for (let i = 0; i < steps; i++) out[i] = i === steps - 1 ? to : from + ((to - from) * i) / (steps - 1);
  return out;
}

/** Check one parameter path of a preset: it must exist and hold a number. */
export function checkPath(preset: Preset, path: string, label: string): number {
  const found = numberAt(preset, path);
  if (!found.ok) throw new TuningInputError(label, `${path} ${found.reason}`);
  return found.value;
}

/** Check that setting `path` to `value` (others unchanged) gives a valid preset. */
export function checkValue(preset: Preset, path: string, value: number, label: string): void {
  const r = withValues(preset, [path], [value]);
  if (!r.ok) throw new TuningInputError(label, `${path} = ${value} is outside the allowed settings: ${formatIssues(r.issues).replace(/\n/g, '; ')}`);
}

export function resolveAxes(preset: Preset, axes: readonly ScanAxis[], labelOf: (i: number) => string = (i) => `axes[${i}]`): ResolvedAxis[] {
  if (axes.length === 0) throw new TuningInputError('axes', 'give one axis (1-D scan) or two (2-D scan)');
  if (axes.length > MAX_SCAN_AXES) throw new TuningInputError(labelOf(MAX_SCAN_AXES), `at most ${MAX_SCAN_AXES} axes (1-D or 2-D scans)`);
  const resolved = axes.map((axis, i) => {
    const label = labelOf(i);
    checkPath(preset, axis.path, label);
    const values = axisValues(axis, label);
    // Limits are intervals, so checking the extremes covers a range; lists are checked value by value.
    const toCheck = axis.values !== undefined ? values : [values[0], values[values.length - 1]];
    for (const v of toCheck) checkValue(preset, axis.path, v, label);
    return { path: axis.path, values };
  });
  if (resolved.length === 2 && resolved[0].path === resolved[1].path) {
    throw new TuningInputError(labelOf(1), `scans the same parameter as the first axis (${resolved[0].path})`);
  }
  if (resolved.length === 2) {
    // Rules that tie two parameters together (a start position inside a gap...) are monotonic, so the
    // corners of the grid decide whether every combination is allowed.
    const spans = resolved.map((a) => [a.values.reduce((m, v) => Math.min(m, v)), a.values.reduce((m, v) => Math.max(m, v))]);
    for (const x of spans[0]) {
      for (const y of spans[1]) {
        const r = withValues(preset, [resolved[0].path, resolved[1].path], [x, y]);
        if (!r.ok) {
          throw new TuningInputError(
            `${labelOf(0)} × ${labelOf(1)}`,
            `the combination ${resolved[0].path} = ${x}, ${resolved[1].path} = ${y} is outside the allowed settings: ${formatIssues(r.issues).replace(/\n/g, '; ')}`,
          );
        }
      }
    }
  }
  const total = resolved.reduce((n, a) => n * a.values.length, 1);
  if (total > MAX_SCAN_POINTS) throw new TuningInputError(labelOf(0), `the scan has ${total} points; at most ${MAX_SCAN_POINTS}`);
  return resolved;
}

export function totalPoints(axes: readonly ResolvedAxis[]): number {
  return axes.reduce((n, a) => n * a.values.length, 1);
}

/** Parameter values of point `index` (first axis slowest). */
export function pointValues(axes: readonly ResolvedAxis[], index: number): number[] {
  const out = new Array<number>(axes.length);
  let rest = index;
  for (let a = axes.length - 1; a >= 0; a--) {
    const n = axes[a].values.length;
    out[a] = axes[a].values[rest % n];
    rest = Math.floor(rest / n);
  }
  return out;
}

export function checkShard(shard: { index: number; count: number }, label: string): void {
  if (!Number.isInteger(shard.count) || shard.count < 1) throw new TuningInputError(label, `shard count must be a whole number ≥ 1 (got ${shard.count})`);
  if (!Number.isInteger(shard.index) || shard.index < 0 || shard.index >= shard.count) {
    throw new TuningInputError(label, `shard must be one of 1..${shard.count} of ${shard.count}`);
  }
}

/** Point indices belonging to a shard (all points when there is no shard), ascending. */
export function shardIndices(total: number, shard?: { index: number; count: number }): number[] {
  const out: number[] = [];
  const step = shard ? shard.count : 1;
  for (let i = shard ? shard.index : 0; i < total; i += step) out.push(i);
  return out;
}
