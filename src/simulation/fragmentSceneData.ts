/**
 * What a run sends the 3D view about decay products (RunOutput.fragmentScene, computed in the worker
 * by src/simulation/fragmentScene.ts): plain data and typed arrays only, no engine imports, so the
 * page reads it without pulling physics into its bundle.
 */

export const FragmentPathKind = { FRAGMENT_ION: 0, NEUTRAL: 1 } as const;

export interface FragmentScene {
  /** Line-segment vertex pairs, 3 floats (scene mm) per vertex, `vertices` in use. */
  readonly positions: Float32Array;
  /** Per vertex: precursor species index (display lanes), FragmentPathKind, and 1 where the product was recorded on a detector. */
  readonly species: Uint16Array;
  readonly kind: Uint8Array;
  readonly recorded: Uint8Array;
  readonly vertices: number;
}

/** Buffers of a FragmentScene, for zero-copy transfer out of the worker. */
export function fragmentSceneTransferables(f: FragmentScene): ArrayBuffer[] {
  return [f.positions, f.species, f.kind, f.recorded].map((a) => a.buffer as ArrayBuffer);
}
