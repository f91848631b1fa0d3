/** The tolerance analysis on worker threads (the tasks the browser's Web Workers run): same numbers as in-process, and a cancel that stops it. */
import { afterAll, describe, expect, it } from 'vitest';
import { createThreadPoolClient } from '../../src/cli/threadPool';
import { CancelledError } from '../../src/tuning/errors';
import { driftDominated, runTolerance, valid } from './helpers';

const client = createThreadPoolClient(2);
afterAll(() => client.dispose());

const preset = valid({
  ...driftDominated(),
  acquisition: { pulseWidth_ns: 1, shots: 10, sampleInterval_ns: 0.5 },
  tolerances: { supplies: { repeller: { drift_ppm: 2, ripple_ppm: 4 } }, temperature: { flightTube_K: 0.1 } },
});

describe('tolerance analysis on worker threads', () => {
  it('equals the in-process analysis', async () => {
    const threaded = await client.tolerance({ preset, draws: 16 });
    expect(threaded).toEqual(await runTolerance({ preset, draws: 16 }));
  });

  it('cancel rejects it and the respawned pool works', async () => {
    let cancelled = false;
    client.onProgress = (p) => {
      if (!cancelled && p.done > 0) {
        cancelled = true;
        client.cancel();
      }
    };
    await expect(client.tolerance({ preset, ions: 5000, draws: 2000 })).rejects.toBeInstanceOf(CancelledError);
    client.onProgress = null;
    expect((await client.tolerance({ preset, draws: 4 })).monteCarlo!.drawsRun).toBe(4);
  });
});
