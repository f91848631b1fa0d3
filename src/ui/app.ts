/**
 * The app, composed: one working setup (a validated preset) edited in the panel, run in the engine
 * worker (src/ui/app/runQueue.ts) and drawn as a 3D view, a spectrum and a peak table
 * (src/ui/app/runRenderer.ts); plus compare, tuning, measured spectra, tolerance and method presets.
 * Each job lives in its own module under src/ui/app/; this file only wires them together.
 */
import { HV_CAUTION } from '../simulation/format';
import { validatePreset } from '../presets/load';
import type { PresetIssue } from '../presets/issues';
import type { Preset } from '../presets/schema';
import type { AppContext, LoadOrigin } from './appContext';
import { SpectrumChart } from './charts/spectrumChart';
import { speciesColours } from './colors';
import { CompareView } from './compare/compareView';
import { byId } from './dom';
import { createRunEngine, createTuningEngine, runWorkersFromQuery, sharePeaksFromQuery, type EngineClient } from './engine/engineClient';
import { presetFileName } from './io/presetFile';
import { ParameterPanel, type EditPhase } from './panel/parameterPanel';
import { cloneJson } from './panel/presetPath';
import { demo } from './presets/demos';
import { PresetsView } from './presets/presetsView';
import { AnalyserScene } from './scene/analyserScene';
import { IdbPresetStore } from './storage/idbPresetStore';
import { TuningView } from './tuning/tuningView';
import { MeasuredView } from './measured/measuredView';
import { ToleranceView } from './tolerance/toleranceView';
import { LoadChartView } from './charts/loadChart';
import { createAutosave } from './app/autosave';
import { DeferredWork } from './app/deferredWork';
import { wireHeaderActions } from './app/headerActions';
import { wireImportExport } from './app/importExport';
import { wirePlayback } from './app/playback';
import { wireResultDownloads } from './app/resultDownloads';
import { RunQueue } from './app/runQueue';
import { RunRenderer } from './app/runRenderer';
import { SetupLoader } from './app/setupLoading';
import { setStatus } from './app/status';
import { wireTabs } from './app/tabs';
import { guardUnload, WorkingSetup } from './app/workingSetup';

export async function startApp(): Promise<void> {
  setStatus('loading');
  byId('hv-note').textContent = HV_CAUTION;
  byId('hv-note').title = HV_CAUTION;
  const statusLine = byId('status-line');

  // Without IndexedDB (private windows of some browsers) the app runs without saving.
  const store: IdbPresetStore | null = await IdbPresetStore.open().catch(() => null);
  const engine: EngineClient = createRunEngine(runWorkersFromQuery(location.search), sharePeaksFromQuery(location.search));
  const tuningEngine: EngineClient = createTuningEngine();

  const setup = new WorkingSetup(demo('linear'));
  // Page work that waits for a run's headline (the run queue holds it while one is due).
  const pageWork = new DeferredWork();
  const autosave = createAutosave(store, () => setup.snapshot(), pageWork);
  guardUnload(setup);

  // ---- views ----------------------------------------------------------------------------------
  let scene: AnalyserScene | null = null;
  try {
    scene = new AnalyserScene(byId<HTMLCanvasElement>('scene'));
  } catch {
    byId('scene-fallback').hidden = false;
  }
  const spectrum = new SpectrumChart(byId('spectrum'));
  const zoomSelect = byId<HTMLSelectElement>('zoom-peak');
  const renderer = new RunRenderer(spectrum, scene, zoomSelect);
  const runs = new RunQueue(
    engine,
    (job, output) => renderer.render(job, output),
    (job, extras) => renderer.renderExtras(job, extras),
    (message) => (statusLine.textContent = message),
    pageWork,
  );

  const panel = new ParameterPanel(byId('panel-host'), byId('panel-issues'), {
    onEdit: (draft, phase) => {
      const checked = validatePreset(cloneJson(draft));
      if (!checked.ok) {
        showInvalid(checked.issues);
        compare.settingsChanged('refused');
        return;
      }
      panel.showIssues([]);
      setup.preset = checked.value;
      // The run first; the saving and the other views' refresh wait until its headline is drawn,
      // so the page's thread does not take a core from the workers meanwhile.
      requestRun(phase);
      compare.settingsChanged('valid');
      setup.refreshHeader();
      if (phase === 'final') {
        autosave();
        pageWork.defer('other views', () => {
          tuning.refresh();
          measured.refresh();
        });
      }
    },
  });
  const requestRun = (kind: EditPhase): void => runs.request(setup.preset, kind, panel.settings.liveIons);
  const showInvalid = (issues: PresetIssue[]): void => {
    panel.showIssues(issues);
    runs.invalidate();
    setStatus('invalid');
    statusLine.textContent = `Not run: ${issues.length} problem${issues.length > 1 ? 's' : ''} in the parameters`;
  };

  // ---- loading setups -------------------------------------------------------------------------
  const applySetup = (preset: Preset, origin: LoadOrigin): void => {
    setup.preset = preset;
    setup.recordId = origin.recordId;
    if (origin.state === 'clean') setup.baseline = JSON.stringify(preset);
    panel.load(preset);
    setup.refreshHeader();
    autosave();
    tuning.refresh();
    measured.refresh();
    void compare.refreshChoices();
    compare.settingsChanged('valid');
    requestRun('final');
  };
  const loader = new SetupLoader(store, setup, applySetup);

  const context: AppContext = {
    engine,
    tuningEngine,
    store,
    working: () => setup.preset,
    recordId: () => setup.recordId,
    isDirty: () => setup.isDirty(),
    loadSetup: (preset, origin) => loader.load(preset, origin),
    markSaved: (id, preset) => {
      setup.recordId = id;
      setup.preset = preset;
      setup.baseline = JSON.stringify(preset);
      panel.load(preset);
      setup.refreshHeader();
      autosave();
    },
    speciesColours: () => speciesColours(setup.preset.ions.species.map((s) => s.mz)),
  };
  const compare = new CompareView(context);
  const tuning = new TuningView(context);
  const tolerance = new ToleranceView(context);
  new LoadChartView(context, byId('pane-results'));
  const presets = new PresetsView(context);
  const measured = new MeasuredView(context, spectrum, [byId('spectrum').parentElement!]);
  presets.onListChange = () => void compare.refreshChoices();
  const showTab = wireTabs({ compare, presets, tuning, measured, tolerance });

  // ---- controls -------------------------------------------------------------------------------
  const save = async (): Promise<void> => {
    if (await presets.saveCurrent()) return;
    showTab('tab-presets');
    presets.askName();
  };
  wireHeaderActions(
    () => requestRun('final'),
    () => void save(),
  );
  wireImportExport(setup, context.loadSetup);
  const baseName = (): string => presetFileName(setup.preset).replace(/\.json$/, '');
  wireResultDownloads(spectrum, renderer, zoomSelect, baseName);
  wirePlayback(scene, baseName);

  await loader.start(store);
}
