/**
 * A pool of lanes that run engine tasks (Web Workers, worker threads, or in-process), and the one
 * scheduler every caller uses: tasks go to whichever lane is free, results come back in task order.
 * Because each task's result depends only on the task, the output is the same for any pool size.
 */
import type { EngineTasks } from './tasks';

type Promised<T> = { [K in keyof T]: T[K] extends (...args: infer A) => infer R ? (...args: A) => Promise<Awaited<R>> : never };

/** One lane: the engine tasks, answered asynchronously (a comlink proxy of a worker fits as it is). */
export type TaskLane = Promised<EngineTasks>;

export interface TaskPool {
  readonly lanes: readonly TaskLane[];
}

/**
 * Run `call(lane, item)` for every item on the first free lane; results in item order. After a
 * failure no new item is started, and the first error is thrown once the running ones settle.
 */
export async function runInOrder<T, R>(
  lanes: readonly TaskLane[],
  items: readonly T[],
  call: (lane: TaskLane, item: T) => Promise<R>,
  onDone?: (done: number, total: number) => void,
): Promise<R[]> {
  if (lanes.length === 0) throw new Error('the task pool has no lanes');
  const results = new Array<R>(items.length);
  let next = 0;
  let done = 0;
  let failure: { error: unknown } | null = null;
  const work = async (lane: TaskLane): Promise<void> => {
    while (failure === null && next < items.length) {
      const i = next++;
      try {
        results[i] = await call(lane, items[i]);
      } catch (error) {
        if (failure === null) failure = { error };
        return;
      }
      done++;
      onDone?.(done, items.length);
    }
  };
  await Promise.all(lanes.map(work));
  if (failure !== null) throw (failure as { error: unknown }).error;
  return results;
}

/** Lanes that run the tasks on the calling thread (tests, and a worker's own scan/optimise). */
export function inProcessPool(tasks: EngineTasks, size = 1): TaskPool {
  const lane: TaskLane = {
    evaluatePoints: async (t) => tasks.evaluatePoints(t),
    search: async (t) => tasks.search(t),
    flatnessEdge: async (t) => tasks.flatnessEdge(t),
    evaluateTolerance: async (t) => tasks.evaluateTolerance(t),
  };
  return { lanes: Array.from({ length: Math.max(1, size) }, () => lane) };
}
