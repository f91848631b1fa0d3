/**
 * `npx tsx bench/browserProfile.ts [exact|pulse|solved|solved_at_focus ...] [--changes N] [--json] [--save trace.json]`:
 * where the page's update time goes. The app is built unminified (so function names survive),
 * served and driven in Debian's Chromium as the browser benchmark does (bench/browserScenarios.ts);
 * after one warm-up change, a Chromium performance trace (CDP Tracing, with the V8 sampling
 * profiler on every thread: the page and each engine worker) records N changes, and the samples
 * are put in buckets by the innermost function of a known job on their stack: sampling, tracing,
 * spectrum deposit, peak finding, calibration, focus, drawn paths, message transfer, chart and 3-D
 * redraw, and so on. Printed per thread in ms per change (CPU time in the sampled stacks, idle left
 * out, only inside each change's window from the key press to the frame that shows it), with the
 * phases of that window from the trace's events, beside the app's own latency figures (document.body.dataset.lastUpdateMs and lastEngineMs).
 * A measuring tool, not a test: run it on a quiet machine, or compare figures of one run only.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build, preview } from 'vite';
import { launchChromium, waitDone } from '../tests/browser/harness';
import { changeOnce, loadScenario, median, scenarios, type Scenario } from './browserScenarios';

const ROOT = fileURLToPath(new URL('..', import.meta.url));

/**
 * Jobs that call the others (drawn paths trace ions, the focus summary traces single ions): the
 * outermost frame of the stack matching one of these names the bucket.
 */
const CONTEXTS: readonly (readonly [string, RegExp])[] = [
  ['drawn paths (scene)', /^(runScene|traceDrawnIons)/],
  ['analysis: focus summary', /^(focusSection|focusScan)/],
  ['ion load / fragments', /^(traceIonLoad|ionLoadSections|compileFragments|traceFragments|buildFragmentReports|traceFragmentScene|productArrays)/],
  ['compile / validate', /^(compilePreset|validatePreset|cloneJson)/],
];

/** Otherwise the innermost frame matching one of these, tried from the leaf up. */
const BUCKETS: readonly (readonly [string, RegExp])[] = [
  ['GC', /^\(garbage collector\)$/],
  ['analysis: spectrum deposit', /^depositGaussianPulse/],
  ['analysis: peak finding', /^(measurePeak|tallestPeak|findPeaks|peakIn|ionSpread)/],
  ['analysis: calibration', /^(calibrate|fitCalibration|assessUnknowns|timeAxisToMz)/],
  ['analysis: other spectrum', /^(buildSpectrum|measureSpeciesPeak|acquisitionSettings|shotNoiseSmoothing)/],
  ['sampling', /^(samplePopulation|drawPopulation|sampleTransverse|sampleVelocities|samplePositions|fillNormal|fillUniform)/],
  ['tracing', /^(traceEnsemble|traceSpeciesBlocks|traceBlock|traceRunChunk|applyDetectorPlane|flySections)/],
  ['report', /^(buildReport|blockReport|attachAnalysis)/],
  ['split-run join', /^(concatChunks|splitRun)/],
  ['page: spectrum chart', /^(setRun|rebuild|draw|bins|binSpectrum|accumulate|histogram)$|uPlot|^(commit|_commit|setData|redraw|drawSeries|drawAxesGrid|paint)$/],
  ['page: 3-D view', /^(setLayout|setEquipotentials|setIons|setFragmentPaths|fillLanes|unpackDrawnIons|tick|renderNow|renderBufferDirect|renderObjects|WebGLRenderer)$/],
  ['page: tables and text', /^(renderPeakTable|renderFates|renderFragmentTable|renderLegend|buildRunView|focusSummary|focusLines|runSummary|refreshZoomChoices)$/],
  ['page: panel edit and autosave', /^(onEdit|edit|autosave|refreshHeader|refresh|settingsChanged)$/],
  ['message transfer / clone', /^(postMessage|deserialize|serialize|structuredClone|onmessage|fromWireValue|toWireValue)$/],
];

interface Frame {
  readonly name: string;
  readonly parent: number | undefined;
}
interface ThreadProfile {
  readonly thread: string;
  readonly nodes: Map<number, Frame>;
  readonly buckets: Map<string, number>;
  readonly selfByName: Map<string, number>;
  time: number;
}

function bucketOf(nodes: Map<number, Frame>, leaf: number, thread: string): string {
  const first = nodes.get(leaf)?.name ?? '';
  if (first === '(idle)') return 'idle';
  let context: string | null = null;
  for (let id: number | undefined = leaf; id !== undefined; id = nodes.get(id)?.parent) {
    const name = nodes.get(id)?.name ?? '';
    for (const [bucket, pattern] of CONTEXTS) if (pattern.test(name)) context = bucket;
  }
  if (context) return context;
  for (let id: number | undefined = leaf; id !== undefined; id = nodes.get(id)?.parent) {
    const name = nodes.get(id)?.name ?? '';
    for (const [bucket, pattern] of BUCKETS) if (pattern.test(name)) return bucket;
  }
  if (first === '(program)') return `${thread}: native (program)`;
  return `${thread}: other script`;
}

interface TraceEvent {
  readonly name: string;
  readonly ph: string;
  readonly pid: number;
  readonly tid: number;
  readonly ts: number;
  readonly dur?: number;
  readonly id?: string;
  readonly args?: {
    readonly name?: string;
    readonly data?: {
      readonly type?: string;
      readonly startTime?: number;
      readonly timeDeltas?: number[];
      readonly cpuProfile?: { readonly nodes?: { id: number; parent?: number; callFrame?: { functionName?: string } }[]; readonly samples?: number[] };
    };
  };
}

/** One change on the trace's clock (µs): from the key press to the end of the first frame committed after the result was handled. */
interface ChangeWindow {
  readonly from: number;
  readonly to: number;
  /** Phases in ms: the key's handler (edit, validation, autosave, the request), waiting for and running the engine, handling the result on the page (unpacking and drawing), and the frame that shows it. */
  readonly phases: Record<string, number>;
}

function changeWindows(events: readonly TraceEvent[], threadName: Map<string, string>): ChangeWindow[] {
  const on = (e: TraceEvent, pattern: RegExp): boolean => pattern.test(threadName.get(`${e.pid}:${e.tid}`) ?? '');
  const main = events.filter((e) => e.ph === 'X' && on(e, /CrRendererMain/)).sort((a, b) => a.ts - b.ts);
  const worker = events.filter((e) => e.ph === 'X' && e.name === 'HandlePostMessage' && on(e, /DedicatedWorker/)).sort((a, b) => a.ts - b.ts);
  const keys = main.filter((e) => e.name === 'EventDispatch' && e.args?.data?.type === 'keydown');
  const end = (e: TraceEvent): number => e.ts + (e.dur ?? 0);
  const windows: ChangeWindow[] = [];
  keys.forEach((key, k) => {
    const next = keys[k + 1]?.ts ?? Infinity;
    // The run's tasks (a split run has several); short messages (progress, pool bookkeeping) are not the run.
    const jobs = worker.filter((e) => e.ts >= key.ts && e.ts < next && (e.dur ?? 0) >= 2000);
    if (jobs.length === 0) return;
    const engineFrom = Math.min(...jobs.map((e) => e.ts));
    const engineTo = Math.max(...jobs.map(end));
    // The page may start on the result a little before the worker's task is closed (the post is its last act).
    const handler = main.filter((e) => e.name === 'HandlePostMessage' && e.ts >= engineTo - 2000 && e.ts < next).sort((a, b) => (b.dur ?? 0) - (a.dur ?? 0))[0];
    if (!handler) return;
    const frame = main.find((e) => (e.name === 'Commit' || e.name === 'Paint') && e.ts >= end(handler));
    const to = frame ? end(frame) : end(handler);
    windows.push({
      from: key.ts,
      to,
      phases: {
        'key handler (edit, validate, autosave, request)': (end(key) - key.ts) / 1000,
        'engine start after the key': (engineFrom - key.ts) / 1000,
        'engine (worker tasks, first to last)': (engineTo - engineFrom) / 1000,
        'result waiting on the page': Math.max(0, handler.ts - engineTo) / 1000,
        'result handler on the page (unpack, render)': (handler.dur ?? 0) / 1000,
        'to the frame committed after it': (to - end(handler)) / 1000,
        'total, key to frame': (to - key.ts) / 1000,
      },
    });
  });
  return windows;
}

/** Samples of every thread's profile inside the change windows, bucketed. Times in ms. */
function analyseTrace(traceEvents: TraceEvent[]): { threads: ThreadProfile[]; windows: ChangeWindow[] } {
  const threadName = new Map<string, string>();
  for (const e of traceEvents) if (e.ph === 'M' && e.name === 'thread_name') threadName.set(`${e.pid}:${e.tid}`, e.args?.name ?? '?');
  const windows = changeWindows(traceEvents, threadName);
  const inWindow = (t: number): boolean => windows.some((w) => t >= w.from && t < w.to);
  const profiles = new Map<string, ThreadProfile & { clock: number }>();
  for (const e of traceEvents) {
    if (e.name !== 'ProfileChunk' && e.name !== 'Profile') continue;
    const key = `${e.pid}:${e.id}`;
    let p = profiles.get(key);
    if (!p) {
      const raw = threadName.get(`${e.pid}:${e.tid}`) ?? `thread ${e.tid}`;
      const thread = /Worker/i.test(raw) ? `worker ${e.tid}` : /CrRendererMain/.test(raw) ? 'page' : raw;
      p = { thread, nodes: new Map(), buckets: new Map(), selfByName: new Map(), time: 0, clock: 0 };
      profiles.set(key, p);
    }
    if (e.name === 'Profile') {
      p.clock = e.args?.data?.startTime ?? e.ts;
      continue;
    }
    const data = e.args?.data ?? {};
    for (const n of data.cpuProfile?.nodes ?? []) p.nodes.set(n.id, { name: n.callFrame?.functionName || '(anonymous)', parent: n.parent });
    const samples: number[] = data.cpuProfile?.samples ?? [];
    const deltas: number[] = data.timeDeltas ?? [];
    // Sample i was taken deltas[i] after sample i-1; it stands for the interval up to the next one.
    for (let i = 0; i < samples.length; i++) {
      p.clock += deltas[i] ?? 0;
      const dt = (deltas[i + 1] ?? deltas[i] ?? 0) / 1000;
      if (dt <= 0 || !inWindow(p.clock)) continue;
      const bucket = bucketOf(p.nodes, samples[i], p.thread);
      p.buckets.set(bucket, (p.buckets.get(bucket) ?? 0) + dt);
      if (bucket !== 'idle') {
        p.time += dt;
        const name = p.nodes.get(samples[i])?.name ?? '?';
        p.selfByName.set(name, (p.selfByName.get(name) ?? 0) + dt);
      }
    }
  }
  return { threads: [...profiles.values()].filter((p) => p.time > 0), windows };
}

const args = process.argv.slice(2);
const json = args.includes('--json');
const changesArg = args.indexOf('--changes');
const changes = changesArg >= 0 ? Number(args[changesArg + 1]) : 4;
const saveArg = args.indexOf('--save');
const savePath = saveArg >= 0 ? args[saveArg + 1] : null;
const wanted = args.filter((a) => ['exact', 'pulse', 'solved', 'solved_at_focus'].includes(a));
const chosen = scenarios().filter((s) => wanted.length === 0 || wanted.includes(s.key));

const outDir = mkdtempSync(join(tmpdir(), 'tof-profile-build-'));
await build({ root: ROOT, logLevel: 'silent', build: { outDir, emptyOutDir: true, minify: false } });
const server = await preview({ root: ROOT, logLevel: 'silent', build: { outDir }, preview: { port: 0, host: '127.0.0.1', strictPort: false } });
const url = server.resolvedUrls?.local[0];
const browser = await launchChromium();
const report: Record<string, unknown> = {};
try {
  if (!url) throw new Error('the preview server reported no address');
  const page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  await page.goto(url);
  await waitDone(page, 120_000);
  await page.click('#tab-results').catch(() => undefined);
  for (const s of chosen) report[s.key] = await profileScenario(s);
} finally {
  await browser.close();
  await server.close();
  rmSync(outDir, { recursive: true, force: true });
}
if (json) process.stdout.write(JSON.stringify(report) + '\n');

async function profileScenario(s: Scenario): Promise<unknown> {
  const page = browser.contexts()[0].pages()[0];
  await loadScenario(page, s.preset);
  await changeOnce(page, s, s.values[0]); // warm-up: the JIT has seen a whole run
  const values = Array.from({ length: changes }, (_, k) => s.values[(k + 1) % s.values.length]);
  await browser.startTracing(page, {
    categories: ['devtools.timeline', 'disabled-by-default-devtools.timeline', 'v8.execute', 'disabled-by-default-v8.cpu_profiler', 'blink.user_timing', 'toplevel'],
  });
  const latency: number[] = [];
  const engine: number[] = [];
  for (const v of values) {
    const [u, e] = await changeOnce(page, s, v);
    latency.push(u);
    engine.push(e);
  }
  const buffer = await browser.stopTracing();
  if (savePath) writeFileSync(`${savePath.replace(/\.json$/, '')}-${s.key}.json`, buffer);
  const trace = JSON.parse(buffer.toString('utf8'));
  const { threads, windows } = analyseTrace(Array.isArray(trace) ? trace : trace.traceEvents);
  const perChange = (ms: number): number => Math.round((10 * ms) / Math.max(1, windows.length)) / 10;
  const phases = Object.fromEntries(Object.keys(windows[0]?.phases ?? {}).map((name) => [name, Math.round(10 * median(windows.map((w) => w.phases[name]))) / 10]));
  const result = {
    latency_ms_median: median(latency),
    engine_ms_median: median(engine),
    latency_ms: latency,
    changes_found_in_trace: windows.length,
    phases_ms_median: phases,
    threads: threads.map((t) => ({
      thread: t.thread,
      busy_ms_per_change: perChange(t.time),
      buckets: Object.fromEntries([...t.buckets].filter(([b]) => b !== 'idle').sort((a, b) => b[1] - a[1]).map(([b, ms]) => [b, perChange(ms)])),
      topSelf: Object.fromEntries([...t.selfByName].sort((a, b) => b[1] - a[1]).slice(0, 12).map(([n, ms]) => [n, perChange(ms)])),
    })),
  };
  if (!json) {
    process.stdout.write(`\n${s.key}: ${values.length} changes, latency median ${median(latency).toFixed(1)} ms (engine ${median(engine).toFixed(1)} ms); all ${latency.map((x) => x.toFixed(0)).join(', ')} ms\n`);
    process.stdout.write(`  phases (median over the ${windows.length} changes found in the trace):\n`);
    for (const [name, ms] of Object.entries(phases)) process.stdout.write(`    ${String(ms).padStart(7)} ms  ${name}\n`);
    process.stdout.write('  CPU in the sampled stacks between key press and frame, per change:\n');
    for (const t of result.threads) {
      process.stdout.write(`  ${t.thread}: busy ${t.busy_ms_per_change} ms per change\n`);
      for (const [b, ms] of Object.entries(t.buckets)) if (ms >= 0.2) process.stdout.write(`    ${String(ms).padStart(7)} ms  ${b}\n`);
      process.stdout.write(`    top self: ${Object.entries(t.topSelf).map(([n, ms]) => `${n} ${ms}`).join(', ')}\n`);
    }
  }
  return result;
}
