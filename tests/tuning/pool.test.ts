/**
 * The pool: scans identical for any pool size with the same seed, in-process and on worker threads
 * (the same tasks the browser's Web Workers run), and cancellation that terminates the workers,
 * rejects what was pending and drops stale results.
 */
import { readFileSync } from 'node:fs';
import * as Comlink from 'comlink';
import type { Endpoint } from 'comlink';
import { afterAll, describe, expect, it } from 'vitest';
import { createThreadPoolClient } from '../../src/cli/threadPool';
import { parsePresetText } from '../../src/presets/load';
import { runOutputTransferables, runRequest } from '../../src/simulation/runOutput';
import type { Progress, ScanRequest } from '../../src/tuning/api';
import { CancelledError } from '../../src/tuning/errors';
import { createWorkerApi } from '../../src/tuning/workerApi';
import { EngineWorkerClient, type WorkerLike } from '../../src/tuning/workerClient';
import { inProcessEngine } from './fixtures';

const loaded = parsePresetText(readFileSync(new URL('../../presets/demo-linear-delayed.json', import.meta.url), 'utf8'));
if (!loaded.ok) throw new Error('demo preset invalid');
const preset = loaded.value;

const scan2d: ScanRequest = {
  preset,
  axes: [
    { path: 'source.extraction.delay_ns', from: 150, to: 250, steps: 4 },
    { path: 'source.repeller.potential_V', values: [19800, 20000, 20200] },
  ],
  objective: { name: 'max-r-at-mz', targetMz: 1336.7008 },
  ions: 1200,
};

describe('scans do not depend on the pool size (same seed at every point)', () => {
  it('in-process pools of 1 and 4 lanes give identical 2-D scans, in order', async () => {
    const one = await inProcessEngine(1).scan(scan2d);
    const four = await inProcessEngine(4).scan(scan2d);
    expect(four).toEqual(one);
    expect(one.points.map((p) => p.index)).toEqual([...Array(12).keys()]);
    // First axis slowest.
    expect(one.points[1].values).toEqual([150, 20000]);
    expect(one.points[3].values).toEqual([150 + 100 / 3, 19800]);
  });

  it('a point depends only on its own values: it equals a single-point scan of the same values', async () => {
    const full = await inProcessEngine(3).scan(scan2d);
    const single = await inProcessEngine(1).scan({ ...scan2d, axes: [{ path: 'source.extraction.delay_ns', values: [full.points[7].values[0]] }, { path: 'source.repeller.potential_V', values: [full.points[7].values[1]] }] });
    expect(single.points[0].species).toEqual(full.points[7].species);
  });
});

describe('worker threads (the CLI pool; the same tasks as the browser workers)', () => {
  const client = createThreadPoolClient(2);
  afterAll(() => client.dispose());

  it('a scan on 2 threads equals the in-process scan', async () => {
    const reference = await inProcessEngine(1).scan(scan2d);
    const progress: Progress[] = [];
    client.onProgress = (p) => progress.push(p);
    const threaded = await client.scan(scan2d);
    expect(threaded).toEqual(reference);
    expect(progress.at(-1)).toMatchObject({ done: 12, total: 12 });
  });

  it('run() returns typed arrays moved out of the thread, equal to an in-process run', async () => {
    const out = await client.run({ preset, ions: 800, seed: 3 });
    const local = runRequest({ preset, ions: 800, seed: 3 });
    expect(out.flightTime_s).toBeInstanceOf(Float64Array);
    expect(Array.from(out.flightTime_s)).toEqual(Array.from(local.flightTime_s));
    expect(Array.from(out.fate)).toEqual(Array.from(local.fate));
    expect(out.report.species).toEqual(local.report.species);
  });

  it('cancel terminates the threads, rejects the scan, and the respawned pool works', async () => {
    const big: ScanRequest = { preset, axes: [{ path: 'source.extraction.delay_ns', from: 100, to: 300, steps: 400 }], ions: 4000 };
    let after = 0;
    let cancelled = false;
    client.onProgress = (p) => {
      if (cancelled) after++;
      else if (p.done > 0) {
        cancelled = true;
        client.cancel();
      }
    };
    const generation = client.runCounter;
    await expect(client.scan(big)).rejects.toBeInstanceOf(CancelledError);
    expect(client.runCounter).toBe(generation + 1);
    expect(client.size).toBe(2);
    expect(after).toBe(0); // no progress of cancelled work is passed on
    client.onProgress = null;
    const again = await client.scan({ ...scan2d, ions: 300 });
    expect(again).toEqual(await inProcessEngine(1).scan({ ...scan2d, ions: 300 }));
  });
});

/** A "worker" on a MessageChannel in this thread; `terminate` closes the channel (calls then never answer). */
function channelWorker(log: string[]): WorkerLike {
  const { port1, port2 } = new MessageChannel();
  Comlink.expose(
    createWorkerApi((r) => {
      const out = runRequest(r);
      return Comlink.transfer(out, runOutputTransferables(out));
    }),
    port1 as unknown as Endpoint,
  );
  return {
    postMessage: (m, t) => port2.postMessage(m, (t ?? []) as Transferable[]),
    addEventListener: (type, l) => type === 'message' && port2.addEventListener('message', l as (e: MessageEvent) => void),
    removeEventListener: (type, l) => type === 'message' && port2.removeEventListener('message', l as (e: MessageEvent) => void),
    terminate: () => {
      log.push('terminated');
      port1.close();
      port2.close();
    },
  };
}

describe('cancellation in the worker client', () => {
  it('pending calls are rejected at once and the workers are replaced', async () => {
    const log: string[] = [];
    const client = new EngineWorkerClient({ size: 2, createWorker: () => channelWorker(log) });
    const pending = client.run({ preset, ions: 500 });
    client.cancel();
    await expect(pending).rejects.toBeInstanceOf(CancelledError);
    expect(log).toEqual(['terminated', 'terminated']);
    // Fresh workers answer, with the buffers transferred.
    const out = await client.run({ preset, ions: 500 });
    expect(out.flightTime_s.length).toBe(500);
    client.dispose();
    await expect(client.run({ preset, ions: 10 })).rejects.toBeInstanceOf(CancelledError);
  });

  it('answers of a worker that outlives the cancel are not used (run counter)', async () => {
    // A worker whose terminate does not stop it: its answer still arrives, and must not be used.
    const { port1, port2 } = new MessageChannel();
    Comlink.expose(createWorkerApi((r) => runRequest(r)), port1 as unknown as Endpoint);
    let made = 0;
    const client = new EngineWorkerClient({
      size: 1,
      createWorker: () => {
        made++;
        return made === 1
          ? {
              postMessage: (m, t) => port2.postMessage(m, (t ?? []) as Transferable[]),
              addEventListener: (type, l) => type === 'message' && port2.addEventListener('message', l as (e: MessageEvent) => void),
              removeEventListener: (type, l) => type === 'message' && port2.removeEventListener('message', l as (e: MessageEvent) => void),
              terminate: () => undefined,
            }
          : channelWorker([]);
      },
    });
    const scan = client.scan({ ...scan2d, ions: 200 });
    client.cancel();
    await expect(scan).rejects.toBeInstanceOf(CancelledError);
    port1.close();
    client.dispose();
  });
});
