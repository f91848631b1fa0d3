/**
 * The app: one working setup (a validated preset) edited in the panel, run in the engine worker,
 * and shown as a 3D view, a spectrum and a peak table; plus compare, tuning and method presets.
 *
 * Runs: at most one in flight; a newer request replaces a queued one. While a control is dragged
 * the setup runs with few ions ('live'); when the change is finished it runs in full ('final'),
 * and `document.body.dataset.status` becomes 'done' once the last run is drawn.
 */
import { HV_CAUTION } from '../simulation/format';
import { htmlReport } from '../simulation/htmlReport';
import { arrivalHistogram } from './results/arrivalHistogram';
import { compilePreset } from '../presets/compile';
import { validatePreset } from '../presets/load';
import type { PresetIssue } from '../presets/issues';
import type { Preset } from '../presets/schema';
import type { RunOutput } from '../tuning/api';
import type { AppContext, LoadOrigin } from './appContext';
import { SpectrumChart, type SpectrumAxis } from './charts/spectrumChart';
import { speciesColours } from './colors';
import { CompareView } from './compare/compareView';
import { byId, confirmDialog, copyText, downloadBlob, downloadText, el, setUpTabs, toast } from './dom';
import { createRunEngine, createTuningEngine, isCancelled, type EngineClient } from './engine/engineClient';
import { formatCount } from './format';
import { presetFileName, presetToJson, readPresetFile } from './io/presetFile';
import { decodeShareToken, encodeShareFragment, shareTokenFromHash } from './io/shareLink';
import { ParameterPanel, type EditPhase } from './panel/parameterPanel';
import { cloneJson } from './panel/presetPath';
import { demo } from './presets/demos';
import { PresetsView } from './presets/presetsView';
import { focusLines, focusSummary } from './results/focusSummary';
import { paintSwatches, renderFates, renderPeakTable, runSummary } from './results/resultsView';
import { renderFragmentTable } from './results/fragmentTable';
import { buildRunView, type RunView } from './results/runView';
import { peakTableCsv } from './results/peakCsv';
import { AnalyserScene } from './scene/analyserScene';
import { drawableModel } from './scene/drawableModel';
import { fillEquipotentials } from './scene/equipotentials';
import { buildLayout } from './scene/layout';
import { createDrawnIons, traceDrawnIons } from './scene/paths';
import { IdbPresetStore } from './storage/idbPresetStore';
import type { WorkingSnapshot } from './storage/presetStore';
import { ReplacedSetupKeeper, replacingNeedsConsent } from './storage/replacedSetup';
import { TuningView } from './tuning/tuningView';
import { MeasuredView } from './measured/measuredView';
import { ToleranceView } from './tolerance/toleranceView';

type Status = 'loading' | 'running' | 'done' | 'invalid' | 'error';

interface RunJob {
  /** Runs requested before the parameters last became invalid are not drawn. */
  readonly generation: number;
  readonly preset: Preset;
  readonly ions: number;
  readonly kind: EditPhase;
  /** When the change that caused this run was made (performance.now()). */
  readonly requestedAt: number;
}

interface ShownRun {
  readonly job: RunJob;
  readonly output: RunOutput;
  readonly view: RunView;
}

const AUTOSAVE_DELAY_MS = 300;

function setStatus(status: Status): void {
  document.body.dataset.status = status;
}

export async function startApp(): Promise<void> {
  setStatus('loading');
  byId('hv-note').textContent = HV_CAUTION;
  byId('hv-note').title = HV_CAUTION;
  const statusLine = byId('status-line');

  let store: IdbPresetStore | null = null;
  try {
    store = await IdbPresetStore.open();
  } catch {
    store = null;
  }
  const engine: EngineClient = createRunEngine();
  const tuningEngine: EngineClient = createTuningEngine();

  let working: Preset = demo('linear');
  let recordId: string | null = null;
  let baseline = JSON.stringify(working);
  let shown: ShownRun | null = null;
  const isDirty = (): boolean => JSON.stringify(working) !== baseline;

  // ---- header ---------------------------------------------------------------------------------
  const refreshHeader = (): void => {
    byId('setup-name').textContent = working.name;
    byId('dirty-mark').hidden = !isDirty();
    document.title = `${isDirty() ? '● ' : ''}${working.name} — TOF Flight Bench`;
  };

  // ---- autosave -------------------------------------------------------------------------------
  let autosaveTimer = 0;
  const autosave = (): void => {
    if (!store) return;
    document.body.dataset.autosave = 'pending';
    clearTimeout(autosaveTimer);
    autosaveTimer = window.setTimeout(() => {
      const snapshot: WorkingSnapshot = { preset: working, recordId, dirty: isDirty(), baseline, savedAt: Date.now() };
      store!.saveWorking(snapshot).then(
        () => (document.body.dataset.autosave = 'saved'),
        () => (document.body.dataset.autosave = 'failed'),
      );
    }, AUTOSAVE_DELAY_MS);
  };
  window.addEventListener('beforeunload', (event) => {
    if (!isDirty()) return;
    event.preventDefault();
    event.returnValue = ''; // older engines need it set to show the prompt
  });

  // ---- views ----------------------------------------------------------------------------------
  let scene: AnalyserScene | null = null;
  try {
    scene = new AnalyserScene(byId<HTMLCanvasElement>('scene'));
  } catch {
    byId('scene-fallback').hidden = false;
  }
  const drawn = createDrawnIons();
  const spectrum = new SpectrumChart(byId('spectrum'));
  const resultsTable = byId<HTMLTableElement>('results-table');

  const panel = new ParameterPanel(byId('panel-host'), byId('panel-issues'), {
    onEdit: (draft, phase) => {
      const checked = validatePreset(cloneJson(draft));
      if (!checked.ok) {
        showInvalid(checked.issues);
        return;
      }
      panel.showIssues([]);
      working = checked.value;
      refreshHeader();
      if (phase === 'final') {
        autosave();
        tuning.refresh();
        measured.refresh();
      }
      requestRun(phase);
    },
  });

  const showInvalid = (issues: PresetIssue[]): void => {
    panel.showIssues(issues);
    queued = null;
    generation++;
    setStatus('invalid');
    statusLine.textContent = `Not run: ${issues.length} problem${issues.length > 1 ? 's' : ''} in the parameters`;
  };

  // ---- runs -----------------------------------------------------------------------------------
  let inFlight: RunJob | null = null;
  let queued: RunJob | null = null;
  let generation = 0;

  /** While dragging: fewer ions and no simulated digitizer (its spectrum per species costs most of a run). */
  const previewOf = (preset: Preset): Preset => {
    const { acquisition: _skipped, ...rest } = preset;
    return rest;
  };

  const requestRun = (kind: EditPhase): void => {
    const ions = kind === 'live' ? Math.min(panel.settings.liveIons, working.run.ions) : working.run.ions;
    const preset = kind === 'live' ? previewOf(working) : working;
    const job: RunJob = { generation, preset, ions, kind, requestedAt: performance.now() };
    setStatus('running');
    if (inFlight) {
      queued = job;
      return;
    }
    void start(job);
  };

  const start = async (job: RunJob): Promise<void> => {
    inFlight = job;
    try {
      const output = await engine.run({ preset: job.preset, ions: job.ions, seed: job.preset.run.seed });
      if (job.generation === generation) render(job, output);
    } catch (err) {
      if (!isCancelled(err)) {
        setStatus('error');
        statusLine.textContent = `Run failed: ${(err as Error).message}`;
        inFlight = null;
        return;
      }
    }
    inFlight = null;
    const next = queued;
    queued = null;
    if (next) void start(next);
    else if (document.body.dataset.status === 'running') setStatus('done');
  };

  const legend = byId('scene-legend');
  const zoomSelect = byId<HTMLSelectElement>('zoom-peak');

  const render = (job: RunJob, output: RunOutput): void => {
    const renderStart = performance.now();
    const report = output.report;
    const colours = speciesColours(report.species.map((s) => s.mz));
    const view = buildRunView(output, colours, job.preset.acquisition?.sampleInterval_ns ?? null);
    renderPeakTable(resultsTable, view.rows, view.calibrationNote, view.calibrationFreedom);
    renderFates(byId('fate-list'), report.fates, report.ions);
    renderFragmentTable(byId('fragment-results'), report);
    byId('run-summary').textContent = runSummary(report, output.elapsed_ms) + (job.kind === 'live' ? ' (quick preview)' : '');
    spectrum.setRun(view.spectrum);
    const labels = report.species.map((s) => s.label);
    if (zoomSelect.options.length !== labels.length + 1 || Array.from(zoomSelect.options).slice(1).some((o, i) => o.textContent !== labels[i])) {
      const keep = zoomSelect.value;
      zoomSelect.replaceChildren(el('option', { value: '', text: 'all peaks' }), ...labels.map((label, i) => el('option', { value: String(i), text: label })));
      zoomSelect.value = Number(keep) < labels.length ? keep : '';
    }
    if (zoomSelect.value !== '') spectrum.zoomToSpecies(Number(zoomSelect.value));

    const compiled = compilePreset(job.preset);
    const drawable = drawableModel(compiled.model);
    if (scene) {
      const layout = buildLayout(drawable.model, job.preset.detector.activeDiameter_mm);
      scene.setLayout(layout);
      scene.setEquipotentials((buffer) => fillEquipotentials(compiled.model, layout, buffer));
      traceDrawnIons(drawn, { ...compiled, model: drawable.model });
      scene.setIons(drawn);
    }
    renderLegend(job.preset, colours, report.species.map((s) => s.label), drawable.approximations);
    if (job.kind === 'final') {
      const focus = focusSummary(compiled, job.preset, report);
      byId('focus-text').replaceChildren(...focusLines(focus).flatMap((line, i) => (i ? [el('br'), line] : [line])));
    }
    shown = { job, output, view };
    const latency = performance.now() - job.requestedAt;
    if (job.kind === 'final') {
      // Figures for the benchmark in the browser tests: whole latency, engine share, drawing share.
      document.body.dataset.lastUpdateMs = latency.toFixed(1);
      document.body.dataset.lastEngineMs = output.elapsed_ms.toFixed(1);
      document.body.dataset.lastRenderMs = (performance.now() - renderStart).toFixed(1);
    }
    statusLine.textContent = `${formatCount(job.ions)} ions · engine ${output.elapsed_ms.toFixed(0)} ms · shown ${latency.toFixed(0)} ms after the change`;
  };

  const renderLegend = (preset: Preset, colours: string[], labels: string[], approximations: readonly string[]): void => {
    const items = labels.slice(0, 16).map((label, i) =>
      el('li', {}, el('span', { className: 'swatch', 'data-colour': colours[i] }), `${label} · m/z ${preset.ions.species[i]?.mz.toFixed(4) ?? ''}`),
    );
    legend.replaceChildren(
      el('ul', { 'aria-label': 'Ion species by m/z' }, ...items),
      el(
        'p',
        { className: 'legend-note' },
        'Axial positions to scale; species in separate lanes.',
        preset.mirror.type === 'none' ? '' : ' Return leg tilted for display.',
        ' Electrodes: blue −, grey 0, amber + potential.',
        approximations.length ? ` Drawing only: ${approximations.join('; ')}.` : '',
      ),
    );
    paintSwatches(legend);
  };

  // ---- loading setups -------------------------------------------------------------------------
  // Every load after start-up keeps the setup it replaces (one level of undo, stored beside the autosave).
  const keeper = new ReplacedSetupKeeper(store);
  const undoButton = byId<HTMLButtonElement>('btn-undo-load');
  keeper.onAvailable = (available) => (undoButton.hidden = !available);
  let started = false;
  const snapshotOfWorking = (): WorkingSnapshot => ({ preset: working, recordId, dirty: isDirty(), baseline, savedAt: Date.now() });
  const loadSetup = (preset: Preset, origin: LoadOrigin): void => {
    if (started) void keeper.remember(snapshotOfWorking(), preset);
    applySetup(preset, origin);
  };
  const applySetup = (preset: Preset, origin: LoadOrigin): void => {
    working = preset;
    recordId = origin.recordId;
    if (origin.state === 'clean') baseline = JSON.stringify(preset);
    panel.load(preset);
    refreshHeader();
    autosave();
    tuning.refresh();
    measured.refresh();
    void compare.refreshChoices();
    requestRun('final');
  };

  const context: AppContext = {
    engine,
    tuningEngine,
    store,
    working: () => working,
    recordId: () => recordId,
    isDirty,
    loadSetup,
    markSaved: (id, preset) => {
      recordId = id;
      working = preset;
      baseline = JSON.stringify(preset);
      panel.load(preset);
      refreshHeader();
      autosave();
    },
    speciesColours: () => speciesColours(working.ions.species.map((s) => s.mz)),
  };
  const compare = new CompareView(context);
  const tuning = new TuningView(context);
  const tolerance = new ToleranceView(context);
  const presets = new PresetsView(context);
  const measured = new MeasuredView(context, spectrum, [byId('spectrum').parentElement!]);
  presets.onListChange = () => void compare.refreshChoices();

  const showTab = setUpTabs(byId('lower-tabs'), (id) => {
    if (id === 'tab-compare') void compare.refreshChoices();
    if (id === 'tab-presets') void presets.refresh();
    if (id === 'tab-tuning') tuning.refresh();
    if (id === 'tab-measured') measured.refresh();
    if (id === 'tab-tolerance') tolerance.refresh();
  });

  // ---- header actions -------------------------------------------------------------------------
  const save = async (): Promise<void> => {
    if (await presets.saveCurrent()) return;
    showTab('tab-presets');
    presets.askName();
  };
  byId('btn-run').addEventListener('click', () => requestRun('final'));
  byId('btn-save').addEventListener('click', () => void save());
  const fileInput = byId<HTMLInputElement>('file-import');
  byId('btn-import').addEventListener('click', () => fileInput.click());
  fileInput.addEventListener('change', () => {
    const file = fileInput.files?.[0];
    fileInput.value = '';
    if (file) void importFile(file);
  });
  const importDialog = byId<HTMLDialogElement>('import-dialog');
  byId('import-dialog-close').addEventListener('click', () => importDialog.close());
  const showLoadProblems = (title: string, issues: readonly PresetIssue[]): void => {
    byId('import-dialog-title').textContent = title;
    byId('import-issues').replaceChildren(...issues.map((i) => el('li', { text: `${i.path}: ${i.message}` })));
    importDialog.showModal();
  };
  const importFile = async (file: File): Promise<void> => {
    const result = await readPresetFile(file);
    if (!result.ok) {
      showLoadProblems(`“${file.name}” was not loaded`, result.issues);
      return;
    }
    if (isDirty() && !(await confirmDialog('Replace the working setup?', 'It has changes that are not saved as a preset.', 'Replace'))) return;
    loadSetup(result.value, { recordId: null, state: 'clean' });
    toast(`Loaded “${result.value.name}” from ${file.name}.`);
  };
  byId('btn-export').addEventListener('click', () => downloadText(presetToJson(working), presetFileName(working), 'application/json'));
  byId('btn-share').addEventListener('click', () => {
    void encodeShareFragment(working).then(async (fragment) => {
      const url = `${location.origin}${location.pathname}#${fragment}`;
      if (await copyText(url)) toast('Link to this setup copied to the clipboard.');
      else toast(`Copy this link: ${url.length > 120 ? url.slice(0, 117) + '…' : url}`, undefined, 12_000);
    });
  });
  document.addEventListener('keydown', (e) => {
    if ((e.ctrlKey || e.metaKey) && e.key === 'Enter') {
      e.preventDefault();
      requestRun('final');
    } else if ((e.ctrlKey || e.metaKey) && (e.key === 's' || e.key === 'S')) {
      e.preventDefault();
      void save();
    }
  });

  // ---- results: spectrum, downloads ------------------------------------------------------------
  for (const radio of document.querySelectorAll<HTMLInputElement>('input[name="spectrum-axis"]')) {
    radio.addEventListener('change', () => {
      if (!radio.checked) return;
      spectrum.setAxis(radio.value as SpectrumAxis);
      if (zoomSelect.value !== '') spectrum.zoomToSpecies(Number(zoomSelect.value));
    });
  }
  zoomSelect.addEventListener('change', () => spectrum.zoomToSpecies(zoomSelect.value === '' ? null : Number(zoomSelect.value)));
  const base = (): string => presetFileName(working).replace(/\.json$/, '');
  byId('btn-spectrum-png').addEventListener('click', () => void spectrum.toPng().then((b) => b && downloadBlob(b, `${base()}-spectrum.png`)));
  byId('btn-csv').addEventListener('click', () => shown && downloadText(peakTableCsv(shown.view.rows), `${base()}-peaks.csv`, 'text/csv'));
  byId('btn-copy-csv').addEventListener('click', () => {
    if (!shown) return;
    void copyText(peakTableCsv(shown.view.rows)).then((ok) => toast(ok ? 'Peak table copied as CSV.' : 'The clipboard is not available here; use the CSV button.'));
  });
  byId('btn-json').addEventListener('click', () => {
    if (!shown) return;
    const doc = { preset: shown.job.preset, ions: shown.job.ions, elapsed_ms: shown.output.elapsed_ms, report: shown.output.report };
    downloadText(JSON.stringify(doc, null, 2) + '\n', `${base()}-results.json`, 'application/json');
  });

  byId('btn-report').addEventListener('click', () => {
    if (!shown) return;
    const page = htmlReport({
      preset: shown.job.preset,
      report: shown.output.report,
      ions: shown.output.report.ions,
      seed: shown.job.preset.run.seed,
      spectrum: arrivalHistogram(shown.output, shown.job.preset.acquisition?.sampleInterval_ns ?? null),
      date: new Date().toISOString(),
      producedBy: 'app',
    });
    downloadText(page, `${base()}-report.html`, 'text/html');
  });

  // ---- 3D view controls -----------------------------------------------------------------------
  const play = byId<HTMLButtonElement>('btn-play');
  const scrub = byId<HTMLInputElement>('time-scrub');
  const readout = byId('time-readout');
  if (scene) {
    const s = scene;
    s.onTime = (t, end) => {
      scrub.value = String(end > 0 ? Math.round((t / end) * 1000) : 0);
      readout.textContent = `t = ${(t * 1e6).toFixed(3)} µs`;
    };
    s.onPlayingChange = (on) => {
      play.textContent = on ? 'Pause' : 'Play';
      play.setAttribute('aria-pressed', String(on));
    };
    play.addEventListener('click', () => s.setPlaying(!s.isPlaying));
    scrub.addEventListener('input', () => {
      s.setPlaying(false);
      s.setTime((Number(scrub.value) / 1000) * s.endTime_s);
    });
    byId<HTMLSelectElement>('play-speed').addEventListener('change', (e) => s.setSpeed(Number((e.target as HTMLSelectElement).value)));
    byId('btn-view-all').addEventListener('click', () => s.frame('all'));
    byId('btn-view-source').addEventListener('click', () => s.frame('source'));
    byId('btn-view-end').addEventListener('click', () => s.frame('far'));
    byId<HTMLInputElement>('cut-view').addEventListener('change', (e) => s.setCutView((e.target as HTMLInputElement).checked));
    byId('btn-scene-png').addEventListener('click', () => void s.toBlob().then((b) => b && downloadBlob(b, `${base()}-3d.png`)));
    s.canvas.addEventListener('keydown', (e) => {
      if (e.key === ' ') {
        e.preventDefault();
        s.setPlaying(!s.isPlaying);
      }
    });
  } else {
    for (const id of ['btn-play', 'time-scrub', 'play-speed', 'btn-view-all', 'btn-view-source', 'btn-view-end', 'cut-view', 'btn-scene-png']) {
      (byId(id) as HTMLButtonElement).disabled = true;
    }
  }

  const undoLoad = async (): Promise<void> => {
    const kept = await keeper.swap(snapshotOfWorking());
    if (!kept) {
      toast('No replaced setup is kept.');
      return;
    }
    baseline = kept.baseline;
    applySetup(kept.preset, { recordId: kept.recordId, state: 'dirty' });
    toast(`Restored “${kept.preset.name}”, the setup the last load replaced (“Undo load” again swaps back).`, undefined, 8000);
  };
  undoButton.addEventListener('click', () => void undoLoad());
  const askToReplace = (): Promise<boolean> =>
    confirmDialog('Open the shared setup?', 'Your working setup has changes that are not saved as a preset. Opening the link replaces it; “Undo load” brings it back.', 'Open shared setup');
  const openShared = (preset: Preset): void => {
    loadSetup(preset, { recordId: null, state: 'dirty' });
    baseline = ''; // a shared setup is unsaved work until saved as a preset
    refreshHeader();
    toast(`Opened the shared setup “${preset.name}”.`, { label: 'Undo', run: () => void undoLoad() }, 8000);
  };
  // A link opened in a tab that already runs the app changes only the fragment.
  window.addEventListener('hashchange', () => {
    const token = shareTokenFromHash(location.hash);
    if (token === null) return;
    history.replaceState(null, '', location.pathname + location.search);
    void decodeShareToken(token).then(async (shared) => {
      if (!shared.ok) return showLoadProblems('The shared link was not loaded', shared.issues);
      if (replacingNeedsConsent(snapshotOfWorking(), shared.value) && !(await askToReplace())) {
        toast('The shared setup was not opened; your working setup is unchanged.');
        return;
      }
      openShared(shared.value);
    });
  });

  // ---- first setup: a shared link, else the autosaved one, else the demo ------------------------
  const token = shareTokenFromHash(location.hash);
  const snapshot = store ? await store.loadWorking().catch(() => undefined) : undefined;
  await keeper.init();
  let first: { preset: Preset; origin: LoadOrigin; baselineText?: string } | null = null;
  if (token !== null) {
    const shared = await decodeShareToken(token);
    history.replaceState(null, '', location.pathname + location.search);
    if (!shared.ok) showLoadProblems('The shared link was not loaded', shared.issues);
    else if (!replacingNeedsConsent(snapshot, shared.value) || (await askToReplace())) {
      if (snapshot) await keeper.remember(snapshot, shared.value);
      first = { preset: shared.value, origin: { recordId: null, state: 'dirty' }, baselineText: '' };
    } else toast('The shared setup was not opened; your working setup is unchanged.');
  }
  if (!first && snapshot) first = { preset: snapshot.preset, origin: { recordId: snapshot.recordId, state: 'dirty' }, baselineText: snapshot.baseline };
  if (first) {
    baseline = first.baselineText ?? JSON.stringify(first.preset);
    loadSetup(first.preset, first.origin);
  } else loadSetup(working, { recordId: null, state: 'clean' });
  started = true;
}
