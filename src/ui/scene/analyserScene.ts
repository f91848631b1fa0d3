/**
 * The 3D view: electrodes to scale, sampled ion paths coloured by m/z and ion packets animated
 * along the flight. Every GPU buffer is allocated once at its largest size: electrodes come from
 * fixed pools of meshes over shared unit geometries (a setup change only moves, scales, recolours
 * and shows/hides them), and paths and packets are single buffers updated in place with a draw
 * range. Rendering happens on demand (camera moves, new data, playing), not in a constant loop.
 */
import {
  AmbientLight,
  BufferAttribute,
  BufferGeometry,
  CylinderGeometry,
  DirectionalLight,
  DoubleSide,
  Float32BufferAttribute,
  LineBasicMaterial,
  LineSegments,
  Mesh,
  MeshBasicMaterial,
  MeshStandardMaterial,
  PerspectiveCamera,
  Plane,
  Points,
  PointsMaterial,
  Scene,
  Vector3,
  WebGLRenderer,
  type Material,
} from 'three';
import { OrbitControls } from 'three/addons/controls/OrbitControls.js';
import { Fate } from '../../physics/fates';
import { potentialRgb } from '../colors';
import { MAX_EQUIPOTENTIAL_SEGMENTS, MAX_MIRROR_RINGS, type FrameBox, type SceneLayout } from '../../simulation/scene/sceneData';
import { fillPaths, MAX_DRAWN_IONS, positionAt, type DrawnIons } from './paths';
import { displayLanes, laneShift_mm, type DisplayLanes } from './displayLanes';
import { FragmentPathLayer } from './fragmentPaths';
import type { FragmentScene } from '../../simulation/fragmentSceneData';

const MAX_PATH_VERTICES = 60_000;
const MAX_PLATES = 4;
const MAX_GRIDS = 10;
const MAX_RINGS = MAX_MIRROR_RINGS + 8;
const HOOPS = 10;

/** Wall-clock seconds one full flight takes at speed 1×. */
const FLIGHT_SECONDS = 8;

function unitCircleWithHatch(hatch: number): BufferGeometry {
  const verts: number[] = [];
  const n = 96;
  for (let i = 0; i < n; i++) {
    const a0 = (i / n) * 2 * Math.PI;
    const a1 = ((i + 1) / n) * 2 * Math.PI;
    verts.push(0, Math.cos(a0), Math.sin(a0), 0, Math.cos(a1), Math.sin(a1));
  }
  // Grid wires: chords across the disc, both directions.
  for (let i = 1; i < hatch; i++) {
    const c = -1 + (2 * i) / hatch;
    const h = Math.sqrt(1 - c * c);
    verts.push(0, c, -h, 0, c, h, 0, -h, c, 0, h, c);
  }
  const g = new BufferGeometry();
  g.setAttribute('position', new Float32BufferAttribute(verts, 3));
  return g;
}

const scratchColour: [number, number, number] = [0, 0, 0];
const scratchVec = new Vector3();

export class AnalyserScene {
  readonly canvas: HTMLCanvasElement;
  private readonly renderer: WebGLRenderer;
  private readonly scene = new Scene();
  private readonly camera = new PerspectiveCamera(38, 1, 0.2, 50_000);
  private readonly controls: OrbitControls;
  private readonly cutPlane = new Plane(new Vector3(0, 0, -1), 0);
  private readonly geometries: BufferGeometry[] = [];
  private readonly materials: Material[] = [];
  private readonly electrodeMaterials: Material[] = [];
  private readonly plates: Mesh[] = [];
  private readonly grids: LineSegments[] = [];
  private readonly rings: Mesh[] = [];
  private readonly hoops: LineSegments[] = [];
  private readonly tube: Mesh;
  private readonly detector: Mesh;
  private readonly paths: LineSegments;
  private readonly pathGeometry = new BufferGeometry();
  /** Equipotential lines of solved regions, shown in the cut view (one buffer, allocated once). */
  private readonly equipotentials: LineSegments;
  private readonly equipotentialGeometry = new BufferGeometry();
  private equipotentialCount = 0;
  private readonly packets: Points;
  private readonly packetGeometry = new BufferGeometry();
  private readonly packetPositions = new Float32Array(3 * MAX_DRAWN_IONS);
  private readonly packetColours = new Float32Array(3 * MAX_DRAWN_IONS);
  private readonly resizeObserver: ResizeObserver;
  private layout: SceneLayout | null = null;
  private ions: DrawnIons | null = null;
  /** Linear mode: species fanned out into lanes for display (see displayLanes). */
  private lanes: DisplayLanes | null = null;
  /** Which drawn ions take part in one species' fillPaths call (allocated once). */
  private readonly laneMask = new Uint8Array(MAX_DRAWN_IONS);
  private time_s = 0;
  private playing = false;
  private speed = 1;
  private lastTick = 0;
  private frameRequest = 0;
  private cut = false;
  /** Decay products' paths, dashed (./fragmentPaths.ts). */
  private readonly fragments = new FragmentPathLayer();
  /** Called with the displayed time whenever it changes (scrub, play). */
  onTime: (t_s: number, end_s: number) => void = () => {};
  onPlayingChange: (playing: boolean) => void = () => {};

  constructor(canvas: HTMLCanvasElement) {
    this.canvas = canvas;
    // preserveDrawingBuffer: screenshots and PNG downloads read the last frame.
    this.renderer = new WebGLRenderer({ canvas, antialias: true, preserveDrawingBuffer: true, alpha: true });
    this.renderer.setPixelRatio(Math.min(window.devicePixelRatio || 1, 2));
    this.renderer.localClippingEnabled = true;
    this.renderer.setClearColor(0x000000, 0);
    this.controls = new OrbitControls(this.camera, canvas);
    this.controls.addEventListener('change', () => this.requestRender());
    this.controls.zoomSpeed = 1.4;
    // Arrow keys pan the view while the canvas has the focus.
    this.controls.listenToKeyEvents(canvas);

    this.scene.add(new AmbientLight(0xffffff, 1.1));
    const sun = new DirectionalLight(0xffffff, 1.6);
    sun.position.set(-0.4, 1, 0.7);
    this.scene.add(sun);

    const disc = this.keep(new CylinderGeometry(1, 1, 1, 72, 1).rotateZ(-Math.PI / 2));
    const band = this.keep(new CylinderGeometry(1, 1, 1, 72, 1, true).rotateZ(-Math.PI / 2));
    const gridLines = this.keep(unitCircleWithHatch(14));
    const hoop = this.keep(unitCircleWithHatch(0));

    for (let i = 0; i < MAX_PLATES; i++) this.plates.push(this.addElectrode(new Mesh(disc, this.electrodeMaterial('solid'))));
    for (let i = 0; i < MAX_GRIDS; i++) this.grids.push(this.addElectrode(new LineSegments(gridLines, this.electrodeMaterial('line'))));
    for (let i = 0; i < MAX_RINGS; i++) this.rings.push(this.addElectrode(new Mesh(band, this.electrodeMaterial('band'))));
    for (let i = 0; i < HOOPS; i++) this.hoops.push(this.addElectrode(new LineSegments(hoop, this.electrodeMaterial('faint'))));
    const tubeMaterial = this.electrodeMaterial('glass');
    this.tube = this.addElectrode(new Mesh(band, tubeMaterial));
    const detectorMaterial = this.keepMaterial(new MeshStandardMaterial({ color: 0x5bc8b8, emissive: 0x0d3b35, metalness: 0.1, roughness: 0.6 }));
    this.electrodeMaterials.push(detectorMaterial);
    this.detector = this.addElectrode(new Mesh(disc, detectorMaterial));

    this.pathGeometry.setAttribute('position', new BufferAttribute(new Float32Array(3 * MAX_PATH_VERTICES), 3));
    this.pathGeometry.setAttribute('color', new BufferAttribute(new Float32Array(3 * MAX_PATH_VERTICES), 3));
    this.pathGeometry.setDrawRange(0, 0);
    this.geometries.push(this.pathGeometry);
    this.paths = new LineSegments(this.pathGeometry, this.keepMaterial(new LineBasicMaterial({ vertexColors: true, transparent: true, opacity: 0.75 })));
    this.paths.frustumCulled = false;
    this.scene.add(this.paths);
    this.scene.add(this.fragments.object);

    this.equipotentialGeometry.setAttribute('position', new BufferAttribute(new Float32Array(12 * MAX_EQUIPOTENTIAL_SEGMENTS), 3));
    this.equipotentialGeometry.setDrawRange(0, 0);
    this.geometries.push(this.equipotentialGeometry);
    this.equipotentials = new LineSegments(this.equipotentialGeometry, this.keepMaterial(new LineBasicMaterial({ color: 0xe0b040, transparent: true, opacity: 0.7 })));
    this.equipotentials.frustumCulled = false;
    this.equipotentials.visible = false;
    this.scene.add(this.equipotentials);

    this.packetGeometry.setAttribute('position', new BufferAttribute(this.packetPositions, 3));
    this.packetGeometry.setAttribute('color', new BufferAttribute(this.packetColours, 3));
    this.packetGeometry.setDrawRange(0, 0);
    this.geometries.push(this.packetGeometry);
    this.packets = new Points(this.packetGeometry, this.keepMaterial(new PointsMaterial({ size: 5, sizeAttenuation: false, vertexColors: true })));
    this.packets.frustumCulled = false;
    this.scene.add(this.packets);

    this.resizeObserver = new ResizeObserver(() => this.resize());
    this.resizeObserver.observe(canvas.parentElement ?? canvas);
    this.resize();
  }

  private keep<T extends BufferGeometry>(g: T): T {
    this.geometries.push(g);
    return g;
  }

  private keepMaterial<T extends Material>(m: T): T {
    this.materials.push(m);
    return m;
  }

  private electrodeMaterial(style: 'solid' | 'line' | 'band' | 'faint' | 'glass'): Material {
    let m: Material;
    if (style === 'solid') m = new MeshStandardMaterial({ color: 0x888888, metalness: 0.35, roughness: 0.55 });
    else if (style === 'band') m = new MeshStandardMaterial({ color: 0x888888, metalness: 0.35, roughness: 0.5, side: DoubleSide, transparent: true, opacity: 0.85 });
    else if (style === 'glass') m = new MeshBasicMaterial({ color: 0x6f8799, side: DoubleSide, transparent: true, opacity: 0.07, depthWrite: false });
    else m = new LineBasicMaterial({ color: 0x888888, transparent: true, opacity: style === 'faint' ? 0.28 : 0.8 });
    this.electrodeMaterials.push(m);
    return this.keepMaterial(m);
  }

  private addElectrode<T extends Mesh | LineSegments>(object: T): T {
    object.visible = false;
    this.scene.add(object);
    return object;
  }

  /** Place the electrodes of a (new) layout: pooled objects are moved and recoloured, never rebuilt. */
  setLayout(layout: SceneLayout): void {
    const firstLayout = this.layout === null;
    this.layout = layout;
    let plate = 0;
    let grid = 0;
    let ring = 0;
    for (const pool of [this.plates, this.grids, this.rings, this.hoops]) for (const o of pool) o.visible = false;
    this.tube.visible = false;
    this.detector.visible = false;
    const paint = (material: Material, v: number): void => {
      potentialRgb(v, layout.largestPotential_V, scratchColour);
      (material as MeshStandardMaterial | LineBasicMaterial).color.setRGB(scratchColour[0], scratchColour[1], scratchColour[2]);
    };
    for (const e of layout.electrodes) {
      if (e.kind === 'plate' && plate < this.plates.length) {
        const m = this.plates[plate++];
        m.position.set(e.x_mm, e.y_mm, 0);
        m.scale.set(e.length_mm, e.radius_mm, e.radius_mm);
        paint(m.material as Material, e.potential_V);
        m.visible = true;
      } else if (e.kind === 'grid' && grid < this.grids.length) {
        const m = this.grids[grid++];
        m.position.set(e.x_mm, e.y_mm, 0);
        m.scale.set(1, e.radius_mm, e.radius_mm);
        paint(m.material as Material, e.potential_V);
        m.visible = true;
      } else if (e.kind === 'ring' && ring < this.rings.length) {
        const m = this.rings[ring++];
        m.position.set(e.x_mm, e.y_mm, 0);
        m.scale.set(Math.max(e.length_mm, 0.3), e.radius_mm, e.radius_mm);
        paint(m.material as Material, e.potential_V);
        m.visible = true;
      } else if (e.kind === 'tube') {
        this.tube.position.set(e.x_mm, e.y_mm, 0);
        this.tube.scale.set(e.length_mm, e.radius_mm, e.radius_mm);
        this.tube.visible = true;
        this.hoops.forEach((h, i) => {
          h.position.set(e.x_mm - e.length_mm / 2 + (e.length_mm * i) / (HOOPS - 1), e.y_mm, 0);
          h.scale.set(1, e.radius_mm, e.radius_mm);
          paint(h.material as Material, e.potential_V);
          h.visible = true;
        });
      } else if (e.kind === 'detector') {
        this.detector.position.set(e.x_mm, e.y_mm, 0);
        this.detector.scale.set(e.length_mm, e.radius_mm, e.radius_mm);
        this.detector.visible = true;
      }
    }
    if (firstLayout) this.frame('all');
    this.requestRender();
  }

  /**
   * Equipotential lines (cut view only): `fill` writes line-segment vertices into the preallocated
   * buffer and returns their count (see equipotentials.ts); 0 hides them.
   */
  setEquipotentials(fill: (buffer: Float32Array) => number): void {
    const pos = this.equipotentialGeometry.getAttribute('position') as BufferAttribute;
    this.equipotentialCount = fill(pos.array as Float32Array);
    pos.needsUpdate = true;
    this.equipotentialGeometry.setDrawRange(0, this.equipotentialCount);
    this.equipotentials.visible = this.cut && this.equipotentialCount > 0;
    this.requestRender();
  }

  /** New drawn ions: paths written into the preallocated buffer, packets reset to the current time. */
  setIons(ions: DrawnIons): void {
    if (!this.layout) return;
    this.ions = ions;
    const pos = this.pathGeometry.getAttribute('position') as BufferAttribute;
    const col = this.pathGeometry.getAttribute('color') as BufferAttribute;
    this.lanes = displayLanes(this.layout, ions.speciesCount);
    const n = this.lanes.spacing_mm > 0 ? this.fillLanes(ions, pos.array as Float32Array, col.array as Float32Array) : fillPaths(ions, this.layout, pos.array as Float32Array, col.array as Float32Array, MAX_PATH_VERTICES);
    // Upload only the vertices written (the buffers hold MAX_PATH_VERTICES; a run draws far fewer).
    for (const attribute of [pos, col]) {
      attribute.clearUpdateRanges();
      attribute.addUpdateRange(0, 3 * n);
      attribute.needsUpdate = true;
    }
    this.pathGeometry.setDrawRange(0, n);
    this.packetGeometry.setDrawRange(0, ions.count);
    if (this.time_s > ions.endTime_s) this.time_s = ions.endTime_s;
    this.updatePackets();
    this.onTime(this.time_s, ions.endTime_s);
    this.requestRender();
  }

  /** Paths species by species (so each vertex's species is known), each shifted into its display lane. */
  private fillLanes(ions: DrawnIons, positions: Float32Array, colours: Float32Array): number {
    const layout = this.layout!;
    const lanes = this.lanes!;
    this.laneMask.set(ions.drawPath.subarray(0, ions.count));
    let v = 0;
    for (let s = 0; s < ions.speciesCount && v < MAX_PATH_VERTICES; s++) {
      for (let k = 0; k < ions.count; k++) ions.drawPath[k] = this.laneMask[k] && ions.species[k] === s ? 1 : 0;
      const written = fillPaths(ions, layout, positions.subarray(3 * v), colours.subarray(3 * v), MAX_PATH_VERTICES - v);
      for (let i = v; i < v + written; i++) positions[3 * i + 1] += laneShift_mm(lanes, s, positions[3 * i]);
      v += written;
    }
    ions.drawPath.set(this.laneMask.subarray(0, ions.count));
    return v;
  }

  /** The decay products' paths of the run (after setIons, whose display lanes they follow); null: none. */
  setFragmentPaths(paths: FragmentScene | null): void {
    this.fragments.set(paths, this.lanes && this.lanes.spacing_mm > 0 ? this.lanes : null);
    this.requestRender();
  }

  get endTime_s(): number {
    return this.ions ? this.ions.endTime_s : 0;
  }

  get currentTime_s(): number {
    return this.time_s;
  }

  setTime(t_s: number): void {
    this.time_s = Math.min(Math.max(t_s, 0), this.endTime_s);
    this.updatePackets();
    this.onTime(this.time_s, this.endTime_s);
    this.requestRender();
  }

  private updatePackets(): void {
    const ions = this.ions;
    const layout = this.layout;
    if (!ions || !layout) return;
    const t = this.time_s;
    for (let k = 0; k < ions.count; k++) {
      positionAt(ions, layout, k, t, this.packetPositions, 3 * k);
      if (this.lanes) this.packetPositions[3 * k + 1] += laneShift_mm(this.lanes, ions.species[k], this.packetPositions[3 * k]);
      const tr = ions.pool[k];
      const end = tr.count ? tr.t0_s[tr.count - 1] + tr.dt_s[tr.count - 1] : 0;
      // Ions lost before t fade; arrived ones stay bright on the detector.
      const dim = t > end && tr.fate !== Fate.DETECTED ? 0.3 : 1;
      this.packetColours[3 * k] = ions.colour[3 * k] * dim;
      this.packetColours[3 * k + 1] = ions.colour[3 * k + 1] * dim;
      this.packetColours[3 * k + 2] = ions.colour[3 * k + 2] * dim;
    }
    (this.packetGeometry.getAttribute('position') as BufferAttribute).needsUpdate = true;
    (this.packetGeometry.getAttribute('color') as BufferAttribute).needsUpdate = true;
  }

  setPlaying(on: boolean): void {
    if (on === this.playing) return;
    if (on && this.time_s >= this.endTime_s) this.time_s = 0;
    this.playing = on;
    this.lastTick = performance.now();
    this.onPlayingChange(on);
    this.requestRender();
  }

  get isPlaying(): boolean {
    return this.playing;
  }

  setSpeed(speed: number): void {
    this.speed = speed;
  }

  setCutView(on: boolean): void {
    this.cut = on;
    for (const m of this.electrodeMaterials) {
      m.clippingPlanes = on ? [this.cutPlane] : null;
      m.needsUpdate = true;
    }
    this.equipotentials.visible = on && this.equipotentialCount > 0;
    this.requestRender();
  }

  get cutView(): boolean {
    return this.cut;
  }

  /** Point the camera at a part of the analyser (whole, source, far end), looking obliquely along the axis. */
  frame(which: 'all' | 'source' | 'far'): void {
    if (!this.layout) return;
    const box: FrameBox = this.layout.frames[which];
    const [cx, cy, cz] = box.centre;
    const radius = Math.hypot(box.half[0], box.half[1], box.half[2]);
    const fov = (this.camera.fov * Math.PI) / 180;
    // Distance at which the box's long axis fills most of the width (the view is wider than tall).
    const horizontal = radius / (Math.tan(fov / 2) * Math.max(this.camera.aspect, 0.5));
    const vertical = Math.max(box.half[1], box.half[2]) / Math.tan(fov / 2);
    const fit = Math.max(horizontal * 1.22, vertical * 1.6);
    scratchVec.set(-0.22, 0.34, 1).normalize().multiplyScalar(fit);
    this.camera.position.set(cx + scratchVec.x, cy + scratchVec.y, cz + scratchVec.z);
    this.camera.near = Math.max(fit / 2000, 0.05);
    this.camera.far = fit * 50 + 10_000;
    this.camera.updateProjectionMatrix();
    this.controls.target.set(cx, cy, cz);
    this.controls.update();
    this.markDetectorOnScreen();
    this.requestRender();
  }

  /** Where the framed view puts the detector (CSS px in the canvas), for the layout test: data-detector-px="x,y". */
  private markDetectorOnScreen(): void {
    if (!this.layout) return;
    const d = this.layout.detector;
    this.camera.updateMatrixWorld();
    scratchVec.set(d.x_mm, d.y_mm, 0).project(this.camera);
    const w = this.canvas.clientWidth;
    const h = this.canvas.clientHeight;
    this.canvas.dataset.detectorPx = `${(((scratchVec.x + 1) / 2) * w).toFixed(0)},${(((1 - scratchVec.y) / 2) * h).toFixed(0)}`;
  }

  requestRender(): void {
    if (this.frameRequest) return;
    this.frameRequest = requestAnimationFrame((now) => this.tick(now));
  }

  private tick(now: number): void {
    this.frameRequest = 0;
    if (this.playing && this.ions) {
      const dt = Math.min((now - this.lastTick) / 1000, 0.1);
      this.lastTick = now;
      const next = this.time_s + (dt * this.speed * this.ions.endTime_s) / FLIGHT_SECONDS;
      if (next >= this.ions.endTime_s) {
        this.time_s = this.ions.endTime_s;
        this.playing = false;
        this.onPlayingChange(false);
      } else this.time_s = next;
      this.updatePackets();
      this.onTime(this.time_s, this.ions.endTime_s);
    }
    this.renderer.render(this.scene, this.camera);
    if (this.playing) this.requestRender();
  }

  /** Render now (for screenshots and PNG export). */
  renderNow(): void {
    this.renderer.render(this.scene, this.camera);
  }

  private resize(): void {
    const host = this.canvas.parentElement ?? this.canvas;
    const w = Math.max(1, host.clientWidth);
    const h = Math.max(1, host.clientHeight);
    this.renderer.setSize(w, h, false);
    this.camera.aspect = w / h;
    this.camera.updateProjectionMatrix();
    this.requestRender();
  }

  toBlob(): Promise<Blob | null> {
    this.renderNow();
    return new Promise((resolve) => this.canvas.toBlob(resolve, 'image/png'));
  }

  dispose(): void {
    cancelAnimationFrame(this.frameRequest);
    this.resizeObserver.disconnect();
    this.controls.stopListenToKeyEvents();
    this.controls.dispose();
    for (const g of this.geometries) g.dispose();
    for (const m of this.materials) m.dispose();
    this.fragments.dispose();
    this.renderer.dispose();
  }
}
