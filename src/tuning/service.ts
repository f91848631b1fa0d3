/**
 * The engine service (EngineApi) over a task pool: scans and tunes are scheduled on the pool's lanes;
 * `run` is passed in, because its clock and transfer handling differ between a worker and the CLI.
 */
import type { RunOutput, RunRequest } from '../simulation/runContract';
import type { EngineApi } from './api';
import type { TaskPool } from './pool';
import { scanWith } from './scan';
import { optimiseWith } from './tune';

export function createEngineService(pool: TaskPool, run: (request: RunRequest) => RunOutput | Promise<RunOutput>): EngineApi {
  return {
    run: async (request) => run(request),
    scan: (request, onProgress) => scanWith(pool, request, onProgress),
    optimise: (request, onProgress) => optimiseWith(pool, request, onProgress),
  };
}
