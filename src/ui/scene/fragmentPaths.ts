/**
 * Decay products in the 3D view: the paths the worker computed (RunOutput.fragmentScene,
 * src/simulation/fragmentScene.ts) drawn dashed over the precursors' solid paths, fragment ions in
 * white and neutrals in violet (the spectrum's product colours), dimmed where the product was not
 * recorded on a detector. One buffer allocated once at its largest size; a new run only rewrites
 * it and sets the draw range. Linear-mode species are shifted into their display lanes, as the
 * precursors' paths are.
 */
import { BufferAttribute, BufferGeometry, LineDashedMaterial, LineSegments } from 'three';
import { FragmentPathKind, type FragmentScene } from '../../simulation/fragmentSceneData';
import { laneShift_mm, type DisplayLanes } from './displayLanes';

/** Most vertices drawn (the worker's own bound). */
export const MAX_FRAGMENT_VERTICES = 20_000;

const COLOURS: Record<number, readonly [number, number, number]> = {
  [FragmentPathKind.FRAGMENT_ION]: [0.95, 0.95, 0.95],
  [FragmentPathKind.NEUTRAL]: [0.79, 0.63, 1],
};

/** Legend words for the products' paths. */
export const FRAGMENT_LEGEND = '╌ decay products from the decay point: white ions, violet neutrals (dim: not recorded)';

export class FragmentPathLayer {
  readonly geometry = new BufferGeometry();
  readonly material = new LineDashedMaterial({ vertexColors: true, dashSize: 6, gapSize: 4, transparent: true, opacity: 0.9 });
  readonly object: LineSegments;
  private readonly positions = new Float32Array(3 * MAX_FRAGMENT_VERTICES);
  private readonly colours = new Float32Array(3 * MAX_FRAGMENT_VERTICES);
  private readonly distances = new Float32Array(MAX_FRAGMENT_VERTICES);
  /** Vertices drawn now. */
  count = 0;

  constructor() {
    this.geometry.setAttribute('position', new BufferAttribute(this.positions, 3));
    this.geometry.setAttribute('color', new BufferAttribute(this.colours, 3));
    this.geometry.setAttribute('lineDistance', new BufferAttribute(this.distances, 1));
    this.geometry.setDrawRange(0, 0);
    this.object = new LineSegments(this.geometry, this.material);
    this.object.frustumCulled = false;
  }

  /** Draw the products of a run (null or absent: none), shifted into `lanes` when the view fans species out. */
  set(paths: FragmentScene | null | undefined, lanes: DisplayLanes | null): void {
    const n = paths ? Math.min(paths.vertices, MAX_FRAGMENT_VERTICES) & ~1 : 0;
    let along = 0;
    for (let v = 0; v < n; v++) {
      const p = paths!;
      const x = p.positions[3 * v];
      this.positions[3 * v] = x;
      this.positions[3 * v + 1] = p.positions[3 * v + 1] + (lanes ? laneShift_mm(lanes, p.species[v], x) : 0);
      this.positions[3 * v + 2] = p.positions[3 * v + 2];
      const c = COLOURS[p.kind[v]] ?? COLOURS[FragmentPathKind.FRAGMENT_ION];
      const dim = p.recorded[v] ? 1 : 0.45;
      this.colours[3 * v] = c[0] * dim;
      this.colours[3 * v + 1] = c[1] * dim;
      this.colours[3 * v + 2] = c[2] * dim;
      // Dash phase runs on along each path (pairs share their end points), so the dashes do not restart per piece.
      if (v % 2 === 1) {
        const dx = this.positions[3 * v] - this.positions[3 * v - 3];
        const dy = this.positions[3 * v + 1] - this.positions[3 * v - 2];
        const dz = this.positions[3 * v + 2] - this.positions[3 * v - 1];
        this.distances[v - 1] = along;
        along += Math.hypot(dx, dy, dz);
        this.distances[v] = along;
      }
    }
    this.count = n;
    for (const name of ['position', 'color', 'lineDistance']) (this.geometry.getAttribute(name) as BufferAttribute).needsUpdate = true;
    this.geometry.setDrawRange(0, n);
  }

  dispose(): void {
    this.geometry.dispose();
    this.material.dispose();
  }
}
