/**
 * The plan of a run split over workers (see src/simulation/runChunks.ts): which runs may be split,
 * the chunk boundaries, joining the chunks in ion order, and the messages' types. No engine code,
 * so the page (src/ui/engine/splitRun.ts) can use it.
 */
import type { TraceResult } from '../ions/ensemble';
import type { MirrorMapReport, MirrorMapSnapshot } from '../physics/solvedMirrorMap';
import type { Preset } from '../presets/schema';
import type { RunOutput, RunRequest } from './runContract';

/** Fewest ions per chunk worth a worker: below this the messages cost more than the tracing saves. */
export const MIN_CHUNK_IONS = 2_000;

/** One worker's share of a split run: ions [from, to), trace arrays of length to − from. */
export interface TraceChunk extends TraceResult {
  readonly from: number;
  readonly to: number;
  /** Time this worker took to sample and trace its chunk (ms). */
  readonly elapsed_ms: number;
  /** With a shared transfer map: how this chunk's own ions crossed the solved mirror (counts of this chunk only). */
  readonly mirrorMap?: MirrorMapReport;
}

/**
 * A solved mirror's transfer map fitted by one worker for a split run (runChunks.fitRunMap): the
 * ions it traced while fitting (per species from its first ion to where the map was decided, in
 * ion order), the fitted map as plain arrays, and the map's report for those ions.
 */
export interface RunMapFit {
  readonly fitted: readonly TraceChunk[];
  readonly snapshot: MirrorMapSnapshot;
  readonly report: MirrorMapReport;
  /** Per species of `report`: its first ion in the run, and whether its map was still undecided when its ions ran out. */
  readonly firstIon: readonly number[];
  readonly open: readonly boolean[];
  /** Per species of `report`: the share of its ions after the fitted ones expected to be traced directly (SolvedMirrorMapper.tracedShare). */
  readonly tracedShare: readonly number[];
  /**
   * [from, to) pairs: the ions of each fitted species after its fitted ones, whose maps are decided
   * in this fit's snapshot, so a worker may trace them by it alone while others still fit.
   */
  readonly rest: readonly number[];
}

/**
 * The fits of several workers, each for its own species (fitRunMap's `part` of `parts`), as one:
 * species in the run's order, counts added, and the run's note as the unsplit run leaves it (the
 * last refusal's reason when every species so far was refused, else none).
 */
export function mergeMapFits(fits: readonly RunMapFit[]): RunMapFit {
  if (fits.length === 1) return fits[0];
  const entries = fits.flatMap((f) => f.report.species.map((s, i) => ({ s, first: f.firstIon[i], open: f.open[i], share: f.tracedShare[i] }))).sort((a, b) => a.first - b.first);
  let note = '';
  let allRefused = true;
  for (const e of entries) {
    if (e.open || e.s.note === '') {
      allRefused = false;
      if (!e.open) note = ''; // decided and in use
    } else note = allRefused ? e.s.note : '';
  }
  const sum = (key: 'mapped' | 'traced' | 'struckByMap' | 'struckBackByMap') => fits.reduce((n, f) => n + f.report[key], 0);
  return {
    fitted: fits.flatMap((f) => f.fitted).sort((a, b) => a.from - b.from),
    snapshot: { values: Float64Array.from(fits.flatMap((f) => Array.from(f.snapshot.values))), species: fits.flatMap((f) => f.snapshot.species) },
    report: { mapped: sum('mapped'), traced: sum('traced'), struckByMap: sum('struckByMap'), struckBackByMap: sum('struckBackByMap'), note, species: entries.map((e) => e.s) },
    firstIon: entries.map((e) => e.first),
    open: entries.map((e) => e.open),
    tracedShare: entries.map((e) => e.share),
    rest: fits.flatMap((f) => [...f.rest]),
  };
}

/** What the chunk workers need of a RunMapFit: the map, and which ions are already traced ([from, to) pairs). */
export interface RunMapShare {
  readonly snapshot: MirrorMapSnapshot;
  readonly fittedRanges: readonly number[];
}

export function mapShare(fit: RunMapFit): RunMapShare {
  return { snapshot: fit.snapshot, fittedRanges: fit.fitted.flatMap((c) => [c.from, c.to]) };
}

/** `trace` with the fitting worker's ions written over it (the chunks leave them zero). */
export function overlayFitted(trace: TraceResult, fitted: readonly TraceChunk[]): TraceResult {
  for (const c of fitted) {
    trace.flightTime_s.set(c.flightTime_s, c.from);
    trace.fate.set(c.fate, c.from);
    trace.finalSpeed_m_per_s.set(c.finalSpeed_m_per_s, c.from);
    trace.weight.set(c.weight, c.from);
    trace.detectorX_m.set(c.detectorX_m, c.from);
    trace.detectorY_m.set(c.detectorY_m, c.from);
  }
  return trace;
}
/**
 * The report of a run whose ions were carried partly by the fitting worker's map (`fitted`) and
 * partly by maps restored from its snapshot (`parts`, counting only their own ions): the counts
 * add up per species, the rest is the fitting worker's.
 */
export function mergeMirrorMapReports(fitted: MirrorMapReport, parts: readonly MirrorMapReport[]): MirrorMapReport {
  const species = fitted.species.map((s) => ({ ...s }));
  const out: MirrorMapReport = { ...fitted, species };
  for (const part of parts) {
    for (const p of part.species) {
      const s = species.find((x) => x.qOverM_C_per_kg === p.qOverM_C_per_kg);
      if (!s) throw new Error(`a restored map's report names a species (q/m ${p.qOverM_C_per_kg} C/kg) the fitted map does not`);
      s.mapped += p.mapped;
      s.traced += p.traced;
      s.struckByMap += p.struckByMap;
      s.struckBackByMap += p.struckBackByMap;
    }
    out.mapped += part.mapped;
    out.traced += part.traced;
    out.struckByMap += part.struckByMap;
    out.struckBackByMap += part.struckBackByMap;
  }
  return out;
}


/**
 * Why a run of `preset` may not be split over workers, or null when it may (read from the preset,
 * so the page can decide without compiling; tests check it agrees with the compiled model). A
 * solved mirror's transfer map is fitted once and shared (fitRunMap, RunMapShare); a solved
 * source's map is not. Runs the adaptive integrator carries from ion to ion are not split either:
 * it starts each solve from the previous ion's first step (AxialIntegrator, a good guess since
 * successive ions are alike), so an ion's numbers depend on the ions traced before it in the same
 * pass, and a chunk starting afresh differs (tests/simulation/runChunksSetups.test.ts; measured on
 * 3 chunks of 2000 ions: 3852 to 4000 of 6000 flight times moved, by up to 6e-12 relative).
 * That is every region under `run.engine = "integrator"`, and a polynomial or harmonic mirror
 * profile (a pasted table is a stack of uniform stages, closed form). A rising pulse alone is in
 * closed form (pulsedStage) and is split.
 */
export function splitRefusal(preset: Preset): string | null {
  if (preset.source.solved) return 'a run through a solved source field is not split over workers (its transfer map learns from the run\'s ions in order)';
  const integrated = preset.run.engine === 'integrator' ? 'run.engine = "integrator"' : preset.mirror.type === 'profile' && preset.mirror.profile.kind !== 'table' ? `the ${preset.mirror.profile.kind} mirror profile` : null;
  if (integrated) return `a run whose integrator carries its first step from ion to ion (${integrated}) is not split over workers: a chunk would not give the unsplit run's numbers`;
  return null;
}

/** True when a run of `preset` may be split (splitRefusal gives the reason when not). */
export function splitsOverWorkers(preset: Preset): boolean {
  return splitRefusal(preset) === null;
}

/** True when the run has a solved mirror (its chunks then share one worker's transfer map, when the run uses one). */
export function hasSolvedMirror(preset: Preset): boolean {
  return preset.mirror.type === 'solved';
}

/** Boundaries of `parts` contiguous chunks of `count` ions (length parts + 1, sizes differ by at most one). */
export function chunkBounds(count: number, parts: number): number[] {
  const n = Math.max(1, Math.min(Math.floor(parts), count));
  const bounds = [0];
  for (let k = 1; k <= n; k++) bounds.push(Math.floor((k * count) / n));
  return bounds;
}

/**
 * Cost of an ion the map carries (its flight outside the mirror and the map's two field samples),
 * relative to one traced through the mirror. From the chunk timings of the gridless demo split in
 * two (Node, 10^4 ions each, 715 and 1653 traced: 88 and 152 ms, i.e. 0.068 ms more per traced
 * ion, and ≤ 39 ms for the rest of a chunk, sampling included): about 0.002 ms, ~3 %.
 */
export const MAPPED_ION_COST = 0.03;

/**
 * Boundaries of `parts` contiguous chunks of `count` ions with about equal expected tracing work
 * under the shared map `fit`: the fitted ions cost nothing (the chunks skip them), every other ion
 * of a species 1 when traced and MAPPED_ION_COST when mapped, by the species' tracedShare. Every
 * chunk keeps at least one ion. Bit-identical results whatever the bounds (each ion's crossing
 * depends on that ion alone once the map is decided).
 */
export function balancedBounds(count: number, parts: number, fit: RunMapFit): number[] {
  const n = Math.max(1, Math.min(Math.floor(parts), count));
  // Piecewise-constant cost per ion: species from their first ion on, fitted ranges zero.
  const cuts = new Set<number>([0, count, ...fit.firstIon, ...fit.fitted.flatMap((c) => [c.from, c.to])]);
  const edges = [...cuts].filter((x) => x >= 0 && x <= count).sort((a, b) => a - b);
  const costAt = (i: number): number => {
    if (fit.fitted.some((c) => i >= c.from && i < c.to)) return 0;
    let s = -1;
    for (let k = 0; k < fit.firstIon.length; k++) if (fit.firstIon[k] <= i && (s < 0 || fit.firstIon[k] > fit.firstIon[s])) s = k;
    const traced = s < 0 ? 1 : fit.tracedShare[s];
    return traced + (1 - traced) * MAPPED_ION_COST;
  };
  const segments = edges.slice(1).map((to, k) => ({ from: edges[k], to, cost: costAt(edges[k]) }));
  const total = segments.reduce((sum, g) => sum + g.cost * (g.to - g.from), 0);
  if (!(total > 0)) return chunkBounds(count, parts);
  const bounds = [0];
  let acc = 0;
  let seg = 0;
  for (let k = 1; k < n; k++) {
    const target = (k * total) / n;
    while (seg < segments.length && acc + segments[seg].cost * (segments[seg].to - segments[seg].from) < target) {
      acc += segments[seg].cost * (segments[seg].to - segments[seg].from);
      seg++;
    }
    const g = segments[Math.min(seg, segments.length - 1)];
    const at = g.cost > 0 ? g.from + Math.ceil((target - acc) / g.cost) : g.from;
    bounds.push(Math.min(count - (n - k), Math.max(bounds[k - 1] + 1, Math.min(at, g.to))));
  }
  bounds.push(count);
  return bounds;
}

/** How many chunks a run of `ions` gets on `workers` workers. */
export function chunkCount(ions: number, workers: number): number {
  return Math.max(1, Math.min(workers, Math.floor(ions / MIN_CHUNK_IONS)));
}

/** The chunks of one run, in any order, as one trace in ion order; they must tile [0, count) exactly. */
export function concatChunks(count: number, chunks: readonly TraceChunk[]): TraceResult {
  const ordered = [...chunks].sort((a, b) => a.from - b.from);
  let next = 0;
  for (const c of ordered) {
    if (c.from !== next || c.to < c.from || c.flightTime_s.length !== c.to - c.from) throw new Error(`trace chunks do not tile the run: expected one from ${next}, got [${c.from}, ${c.to})`);
    next = c.to;
  }
  if (next !== count) throw new Error(`trace chunks cover ${next} of ${count} ions`);
  const out: TraceResult = {
    flightTime_s: new Float64Array(count),
    fate: new Uint8Array(count),
    finalSpeed_m_per_s: new Float64Array(count),
    weight: new Float64Array(count),
    detectorX_m: new Float64Array(count),
    detectorY_m: new Float64Array(count),
  };
  for (const c of ordered) {
    out.flightTime_s.set(c.flightTime_s, c.from);
    out.fate.set(c.fate, c.from);
    out.finalSpeed_m_per_s.set(c.finalSpeed_m_per_s, c.from);
    out.weight.set(c.weight, c.from);
    out.detectorX_m.set(c.detectorX_m, c.from);
    out.detectorY_m.set(c.detectorY_m, c.from);
  }
  return out;
}

/** Buffers of a chunk or a trace, for transfer between threads. */
export function traceTransferables(t: TraceResult | TraceChunk): ArrayBuffer[] {
  return [t.flightTime_s.buffer, t.fate.buffer, t.finalSpeed_m_per_s.buffer, t.weight.buffer, t.detectorX_m.buffer, t.detectorY_m.buffer] as ArrayBuffer[];
}

/** What a worker offers for split runs (workers/engine.worker.ts); results come back transferred. */
export interface SplitRunTasks {
  /** `map`: the shared transfer map of a solved mirror (its fitted ions are skipped). */
  traceRunChunk(request: RunRequest, from: number, to: number, map?: RunMapShare): TraceChunk | Promise<TraceChunk>;
  /** A solved mirror's transfer map fitted on the run's ions (the species of `part` of `parts`, for mergeMapFits); null when the run uses none. */
  fitRunMap(request: RunRequest, part?: number, parts?: number): RunMapFit | null | Promise<RunMapFit | null>;
  /** The whole run finished on a trace computed elsewhere (runRequest with `traced`, and the map's report when one was used). */
  finishRun(request: RunRequest, traced: TraceResult, mirrorMap?: MirrorMapReport): RunOutput | Promise<RunOutput>;
}

/** Buffers of a RunMapFit, for transfer. */
export function mapFitTransferables(fit: RunMapFit): ArrayBuffer[] {
  return [...fit.fitted.flatMap((c) => traceTransferables(c)), fit.snapshot.values.buffer as ArrayBuffer];
}
