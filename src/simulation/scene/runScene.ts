/**
 * The 3D view's share of a run (RunRequest.scene), computed in the worker: the electrode layout
 * (from the drawable model, ./drawableModel.ts), the equipotentials of solved regions and the drawn
 * ions, flown by the run's own kernel choice (./drawnPaths.ts).
 */
import type { CompiledPreset } from '../../presets/compile';
import type { Preset } from '../../presets/schema';
import { drawableModel } from './drawableModel';
import { CHORD_NOTE, traceDrawnIons } from './drawnPaths';
import { fillEquipotentials, MAX_EQUIPOTENTIAL_SEGMENTS } from './equipotentials';
import { buildLayout } from './layout';
import type { RunScene, SceneRequest } from './sceneData';

let equipotentialBuffer: Float32Array | null = null;

export function runScene(preset: Preset, compiled: CompiledPreset, request: SceneRequest = {}): RunScene {
  const drawable = drawableModel(compiled.model);
  const layout = buildLayout(drawable.model, preset.detector.activeDiameter_mm);
  equipotentialBuffer ??= new Float32Array(12 * MAX_EQUIPOTENTIAL_SEGMENTS);
  const vertices = fillEquipotentials(compiled.model, layout, equipotentialBuffer);
  const drawn = traceDrawnIons(compiled, request);
  return {
    layout,
    equipotentials: equipotentialBuffer.slice(0, 3 * vertices),
    paths: drawn.paths,
    approximations: drawn.chords ? [...drawable.approximations, CHORD_NOTE] : drawable.approximations,
  };
}
