/**
 * What the engine worker exposes: the service (run/scan/optimise, with scans and tunes run on the
 * worker's own thread) plus the pool tasks, so that a client can spread one scan or tune over many
 * workers. Shared by the browser worker (workers/engine.worker.ts) and the Node worker thread.
 */
import type { RunOutput, RunRequest } from '../simulation/runContract';
import type { EngineApi } from './api';
import { inProcessPool } from './pool';
import { createEngineService } from './service';
import { engineTasks, type EngineTasks } from './tasks';

export interface EngineWorkerApi extends EngineApi, EngineTasks {}

export function createWorkerApi(run: (request: RunRequest) => RunOutput): EngineWorkerApi {
  const service = createEngineService(inProcessPool(engineTasks, 1), run);
  return {
    run: service.run,
    scan: service.scan,
    optimise: service.optimise,
    evaluatePoints: engineTasks.evaluatePoints,
    search: engineTasks.search,
    flatnessEdge: engineTasks.flatnessEdge,
    evaluateTolerance: engineTasks.evaluateTolerance,
  };
}
