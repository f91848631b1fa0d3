/**
 * The contract of one run, as the engine worker (workers/engine.worker.ts) answers it and as the CLI
 * and the tuning service call it in-process (src/simulation/runOutput.ts). Presets cross this
 * boundary as validated `Preset` objects (plain JSON data); results carry typed arrays that the
 * worker transfers rather than copies.
 */
import type { FocusScan } from '../analysis/focusScan';
import type { Preset } from '../presets/schema';
import type { RunReport } from './report';
import type { SpectrumPeakReport } from './analysisReport';
import type { RunScene, SceneRequest } from './scene/sceneData';
import type { ProductArrays } from './productArrays';
import type { FragmentScene } from './fragmentSceneData';

export interface RunRequest {
  readonly preset: Preset;
  /** Override of the preset's ion count (e.g. a light rerun while a slider is dragged). */
  readonly ions?: number;
  readonly seed?: number;
  /** Build the spectrum, peak, calibration and focus sections (default true); off for quick previews. */
  readonly analysis?: boolean;
  /** Also count the ions that cross the extraction grid during the delay (src/simulation/pulseReach.ts). */
  readonly pulseReach?: boolean;
  /** Also scan m/z for the start-energy focus (src/analysis/focusScan.ts). */
  readonly focusScan?: boolean;
  /** Also compute what the 3D view draws: layout, equipotentials and drawn ions traced with the run's engine. */
  readonly scene?: SceneRequest;
  /**
   * Build the report's focus section (default true with the analysis). The page leaves it, the scene
   * and the focus scan out of the run and asks for them with `runExtras`, so the charts need not wait.
   */
  readonly focus?: boolean;
  /** Per ensemble species block, its spectrum peak already measured on this run (`speciesPeaksPart`, shared out over two workers). */
  readonly givenPeaks?: readonly (SpectrumPeakReport | null)[];
}

/**
 * What a page draws beside the charts, computed apart from the run (`runExtras` in
 * src/simulation/runOutput.ts) so that a second worker can do it while the first runs the headline:
 * none of it reads the run's per-ion trace (the drawn ions and the focus ions are traced on their own).
 */
export interface RunExtrasRequest {
  readonly preset: Preset;
  readonly ions?: number;
  readonly seed?: number;
  /** The report's focus section, as the run builds it with the analysis. */
  readonly focus?: boolean;
  /** The m/z scan for the start-energy focus (RunRequest.focusScan). */
  readonly focusScan?: boolean;
  /** The 3D view's layout, equipotentials and drawn ions (RunRequest.scene), and the decay products' paths when species decay. */
  readonly scene?: SceneRequest;
}

export interface RunExtras {
  /** The report's focus section when asked for (RunReport['focus']). */
  readonly focus?: RunReport['focus'];
  readonly focusScan?: FocusScan;
  readonly scene?: RunScene;
  readonly fragmentScene?: FragmentScene;
  /** Wall-clock time the extras took inside the engine (ms). */
  readonly elapsed_ms: number;
}

export interface RunOutput {
  readonly report: RunReport;
  /** Per-ion flight times (s) and fate codes, same order as the ensemble (species blocks). */
  readonly flightTime_s: Float64Array;
  readonly fate: Uint8Array;
  /** Ion index boundaries per reported species (all of its isotope peaks), length species + 1. */
  readonly speciesStart: Int32Array;
  /** Wall-clock time the run took inside the engine (ms), for the app's status line. */
  readonly elapsed_ms: number;
  /** When asked for (RunRequest.pulseReach): ions in the source at the pulse, and those past its first stage. */
  readonly pulseReach?: { readonly inSource: number; readonly pastFirstStage: number };
  /** When asked for (RunRequest.focusScan). */
  readonly focusScan?: FocusScan;
  /** When asked for (RunRequest.scene). */
  readonly scene?: RunScene;
  /** Decay products (fragment ions and neutrals, per ion) when the preset's species decay in flight; absent otherwise. */
  readonly products?: ProductArrays;
  /** With RunRequest.scene and decaying species: a few decay products' paths for the 3D view. */
  readonly fragmentScene?: FragmentScene;
}
