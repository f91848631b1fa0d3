/**
 * Parameter scans over a pool: the points (or a shard of them) are cut into batches, the batches run
 * on free lanes, and the points come back in index order with the same values for any pool size.
 */
import type { Preset } from '../presets/schema';
import type { Progress, ScanRequest, ScanResult } from './api';
import { resolveCriterion, resolveObjective, type ObjectiveLabels, REQUEST_LABELS } from './objective';
import { runInOrder, type TaskPool } from './pool';
import { checkIons, checkSeed } from './requestChecks';
import { checkShard, pointValues, resolveAxes, shardIndices, totalPoints, type ResolvedAxis } from './scanPlan';
import type { PointsTask } from './tasks';

export interface ScanLabels {
  readonly axis: (i: number) => string;
  readonly objective: ObjectiveLabels;
  readonly shard: string;
  readonly ions: string;
  readonly seed: string;
}

export const SCAN_REQUEST_LABELS: ScanLabels = {
  axis: (i) => `axes[${i}]`,
  objective: REQUEST_LABELS,
  shard: 'shard',
  ions: 'ions',
  seed: 'seed',
};

export interface CheckedScan {
  readonly axes: ResolvedAxis[];
  readonly indices: number[];
  readonly total: number;
}

/** Every check of a scan request, before any work: throws TuningInputError naming the argument. */
export function checkScanRequest(request: ScanRequest, labels: ScanLabels = SCAN_REQUEST_LABELS): CheckedScan {
  const axes = resolveAxes(request.preset, request.axes, labels.axis);
  if (request.objective) resolveObjective(request.objective, request.preset, labels.objective);
  resolveCriterion(request.preset, request.criterion);
  if (request.shard) checkShard(request.shard, labels.shard);
  checkIons(request.ions, labels.ions);
  checkSeed(request.seed, labels.seed);
  const total = totalPoints(axes);
  return { axes, total, indices: shardIndices(total, request.shard) };
}

/** Points per batch: enough batches to keep every lane busy to the end, few enough to keep messages small. */
function batchSize(points: number, lanes: number): number {
  return Math.max(1, Math.min(16, Math.ceil(points / (4 * lanes))));
}

export async function scanWith(pool: TaskPool, request: ScanRequest, onProgress?: (p: Progress) => void): Promise<ScanResult> {
  const checked = checkScanRequest(request);
  const preset: Preset = request.preset;
  const paths = checked.axes.map((a) => a.path);
  const size = batchSize(checked.indices.length, pool.lanes.length);
  const tasks: PointsTask[] = [];
  for (let i = 0; i < checked.indices.length; i += size) {
    tasks.push({
      preset,
      paths,
      ions: request.ions,
      seed: request.seed,
      objective: request.objective ?? null,
      measure: 'fwhm',
      criterion: resolveCriterion(preset, request.criterion),
      points: checked.indices.slice(i, i + size).map((index) => ({ index, values: pointValues(checked.axes, index) })),
    });
  }
  let pointsDone = 0;
  onProgress?.({ done: 0, total: checked.indices.length, message: 'scanning' });
  const results = await runInOrder(pool.lanes, tasks, async (lane, task) => {
    const r = await lane.evaluatePoints(task);
    pointsDone += task.points.length;
    onProgress?.({ done: pointsDone, total: checked.indices.length, message: 'scanning' });
    return r;
  });
  return {
    axes: request.axes,
    totalPoints: checked.total,
    points: results.flatMap((r) => r.points),
    ions: request.ions ?? preset.run.ions,
    seed: request.seed ?? preset.run.seed,
    objective: request.objective ?? null,
    shard: request.shard ?? null,
    criterion: resolveCriterion(preset, request.criterion),
  };
}
