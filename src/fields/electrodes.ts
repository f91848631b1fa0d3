/**
 * Electrode geometry for the axisymmetric field solver, in (r, z) with SI metres.
 *
 * Every electrode is a solid of revolution whose meridian section is a rectangle
 * [rMin, rMax] × [zMin, zMax]; a planar grid is the degenerate case zMin = zMax.
 * Potentials are linear in a small set of independent voltage sources ("drives"): an electrode
 * with its own potential is its own drive, one tied to another shares that drive, and the rings
 * of a resistor-divider stack are taps on the two terminals of their divider. One unit field per
 * drive then covers every voltage setting.
 */

/** A problem found in user geometry: where (e.g. `electrodes[2].thickness_m`) and why. */
export interface FieldIssue {
  readonly path: string;
  readonly message: string;
}

/** Extent of the solution domain; the solver encloses it in a grounded can (see mesh.ts). */
export interface DomainBounds {
  readonly rMax_m: number;
  readonly zMin_m: number;
  readonly zMax_m: number;
}

/**
 * Fields shared by the single electrodes. Give exactly one of `potential_V` (the electrode is its
 * own voltage source) and `tiedTo` (the name of an electrode with its own potential: both are one
 * conductor, e.g. a tube and the plate closing it, and may touch).
 */
export interface SingleElectrodeBase {
  readonly name: string;
  readonly potential_V?: number;
  readonly tiedTo?: string;
}

/** Flat plate perpendicular to the axis with a central round aperture (aperture 0 = solid disc). */
export interface PlateSpec extends SingleElectrodeBase {
  readonly kind: 'plate';
  /** Upstream (lower-z) face. */
  readonly z_m: number;
  readonly thickness_m: number;
  readonly apertureRadius_m: number;
  readonly outerRadius_m: number;
}

/** Annular ring: inner/outer radius and its z extent. */
export interface RingSpec extends SingleElectrodeBase {
  readonly kind: 'ring';
  readonly innerRadius_m: number;
  readonly outerRadius_m: number;
  readonly zFrom_m: number;
  readonly zTo_m: number;
}

/** Cylindrical tube: inner radius, wall thickness outwards, and its z extent. */
export interface TubeSpec extends SingleElectrodeBase {
  readonly kind: 'tube';
  readonly radius_m: number;
  readonly wallThickness_m: number;
  readonly zFrom_m: number;
  readonly zTo_m: number;
}

/**
 * Idealised mesh grid: an equipotential plane of zero thickness, transparent to ions.
 * It spans the axis out to `radius_m`, by default the whole domain radius.
 */
export interface GridPlaneSpec extends SingleElectrodeBase {
  readonly kind: 'gridPlane';
  readonly z_m: number;
  readonly radius_m?: number;
}

/**
 * N identical rings at a fixed pitch whose potentials come from a resistor chain.
 * `resistorRatios` (only ratios matter) has either
 *  - N − 1 entries: the chain runs from ring 0 (start terminal) to ring N − 1 (end terminal), or
 *  - N + 1 entries: start terminal → R0 → ring 0 → R1 → … → ring N − 1 → R_N → end terminal.
 * Each terminal is either its own drive (`startPotential_V`) or tied to another electrode's drive
 * (`startTiedTo`: that electrode's name), and the same for the end.
 */
export interface RingStackSpec {
  readonly kind: 'ringStack';
  readonly name: string;
  readonly count: number;
  /** Upstream face of ring 0. */
  readonly firstZ_m: number;
  readonly pitch_m: number;
  readonly thickness_m: number;
  readonly innerRadius_m: number;
  readonly outerRadius_m: number;
  readonly resistorRatios: readonly number[];
  readonly startPotential_V?: number;
  readonly endPotential_V?: number;
  readonly startTiedTo?: string;
  readonly endTiedTo?: string;
}

export type ElectrodeSpec = PlateSpec | RingSpec | TubeSpec | GridPlaneSpec | RingStackSpec;

/** An independent voltage source. */
export interface Drive {
  readonly name: string;
  readonly potential_V: number;
}

/** Potential of an electrode = Σ weight × (voltage of drive). */
export interface DriveTerm {
  readonly drive: number;
  readonly weight: number;
}

/** One solid electrode (or grid plane) after expansion of the specs. */
export interface Electrode {
  readonly name: string;
  readonly kind: 'plate' | 'ring' | 'tube' | 'gridPlane';
  readonly rMin_m: number;
  readonly rMax_m: number;
  readonly zMin_m: number;
  readonly zMax_m: number;
  /** Grid planes let ions through; the tracer must not count them as strikes. */
  readonly transparent: boolean;
  readonly terms: readonly DriveTerm[];
  /** Path of the spec it came from, for messages. */
  readonly path: string;
}

export interface ElectrodeLayout {
  readonly electrodes: readonly Electrode[];
  readonly drives: readonly Drive[];
}

export type LayoutResult = { readonly ok: true; readonly layout: ElectrodeLayout } | { readonly ok: false; readonly issues: FieldIssue[] };

/** Ring count limit per stack: keeps the pairwise geometry checks and the mesh masks bounded. */
const MAX_STACK_RINGS = 10_000;

const isFiniteNumber = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

/**
 * Position of each ring along a resistor chain: 0 at the start terminal, 1 at the end terminal
 * (Ohm's law for a series chain: the tap voltage divides in proportion to resistance below it).
 * Returns null when the ratio count does not fit `count` or a ratio is not positive.
 */
export function dividerFractions(resistorRatios: readonly number[], count: number): Float64Array | null {
  const n = resistorRatios.length;
  if (n !== count - 1 && n !== count + 1) return null;
  let total = 0;
  for (const ratio of resistorRatios) {
    if (!isFiniteNumber(ratio) || ratio <= 0) return null;
    total += ratio;
  }
  const fractions = new Float64Array(count);
  const externalTerminals = n === count + 1;
  let below = 0;
  for (let k = 0; k < count; k++) {
    // With external terminals, ring k sits after resistors R0..Rk; otherwise after R0..R(k-1).
    if (externalTerminals) below += resistorRatios[k];
    else if (k > 0) below += resistorRatios[k - 1];
    fractions[k] = below / total;
  }
  return fractions;
}

function checkPositive(issues: FieldIssue[], path: string, value: unknown, what: string): boolean {
  if (!isFiniteNumber(value) || value <= 0) {
    issues.push({ path, message: `${what} must be a finite number > 0 (got ${String(value)})` });
    return false;
  }
  return true;
}

function checkNonNegative(issues: FieldIssue[], path: string, value: unknown, what: string): boolean {
  if (!isFiniteNumber(value) || value < 0) {
    issues.push({ path, message: `${what} must be a finite number ≥ 0 (got ${String(value)})` });
    return false;
  }
  return true;
}

function checkFinite(issues: FieldIssue[], path: string, value: unknown, what: string): boolean {
  if (!isFiniteNumber(value)) {
    issues.push({ path, message: `${what} must be a finite number (got ${String(value)})` });
    return false;
  }
  return true;
}

/** True when two electrodes always carry the same potential (same drives, same weights). */
export function sameConductor(a: Electrode, b: Electrode): boolean {
  if (a.terms.length === 0 || a.terms.length !== b.terms.length) return false;
  return a.terms.every((t, k) => t.drive === b.terms[k].drive && t.weight === b.terms[k].weight);
}

/**
 * Electrodes at different potentials must not even touch (they would short each other). Parts of
 * one conductor (a tube and its end plate, a plate and the grid over its aperture) may touch,
 * but their interiors must not overlap.
 */
function collide(a: Electrode, b: Electrode): boolean {
  if (sameConductor(a, b)) return a.rMin_m < b.rMax_m && b.rMin_m < a.rMax_m && a.zMin_m < b.zMax_m && b.zMin_m < a.zMax_m;
  return a.rMin_m <= b.rMax_m && b.rMin_m <= a.rMax_m && a.zMin_m <= b.zMax_m && b.zMin_m <= a.zMax_m;
}

function checkBounds(issues: FieldIssue[], e: Electrode, bounds: DomainBounds): void {
  // Relative slack so that an electrode drawn exactly to the domain edge is accepted.
  const slackR = 1e-12 * bounds.rMax_m;
  const slackZ = 1e-12 * Math.max(Math.abs(bounds.zMin_m), Math.abs(bounds.zMax_m), bounds.zMax_m - bounds.zMin_m);
  if (e.rMax_m > bounds.rMax_m + slackR) {
    issues.push({ path: e.path, message: `${e.name} reaches r = ${e.rMax_m} m, outside the mesh radius ${bounds.rMax_m} m` });
  }
  if (e.zMin_m < bounds.zMin_m - slackZ || e.zMax_m > bounds.zMax_m + slackZ) {
    issues.push({
      path: e.path,
      message: `${e.name} spans z = ${e.zMin_m}…${e.zMax_m} m, outside the mesh z range ${bounds.zMin_m}…${bounds.zMax_m} m`,
    });
  }
}

function checkBoundsSpec(issues: FieldIssue[], bounds: DomainBounds): boolean {
  const before = issues.length;
  checkPositive(issues, 'mesh.rMax_m', bounds.rMax_m, 'mesh radius');
  checkFinite(issues, 'mesh.zMin_m', bounds.zMin_m, 'mesh z start');
  checkFinite(issues, 'mesh.zMax_m', bounds.zMax_m, 'mesh z end');
  if (issues.length === before && !(bounds.zMax_m > bounds.zMin_m)) {
    issues.push({ path: 'mesh.zMax_m', message: 'mesh z end must be greater than its z start' });
  }
  return issues.length === before;
}

/**
 * Expand and check electrode specs. Never throws for user input: every impossible geometry
 * (non-positive sizes, electrodes outside the domain, touching or overlapping electrodes,
 * bad divider data, duplicate names, dangling ties) comes back as an issue.
 * Electrodes keep the spec order, each ring stack expanded in place into its rings.
 */
export function buildLayout(specs: readonly ElectrodeSpec[], bounds: DomainBounds): LayoutResult {
  const issues: FieldIssue[] = [];
  if (bounds === null || typeof bounds !== 'object') return { ok: false, issues: [{ path: 'mesh', message: 'mesh extent is missing' }] };
  const boundsOk = checkBoundsSpec(issues, bounds);
  if (!Array.isArray(specs)) {
    return { ok: false, issues: [...issues, { path: 'electrodes', message: 'electrodes must be a list' }] };
  }
  // Geometry first, in spec order; drive terms are filled in once every own-potential drive exists.
  type Draft = Omit<Electrode, 'terms'> & { terms: DriveTerm[] };
  const electrodes: Draft[] = [];
  const drives: Drive[] = [];
  const driveOf = new Map<string, number>(); // electrodes with their own potential
  const names = new Set<string>();
  const pendingTies: { draft: Draft; target: string; path: string }[] = [];
  const pendingStacks: { spec: RingStackSpec; path: string; rings: Draft[] }[] = [];

  const claimName = (name: unknown, path: string): boolean => {
    if (typeof name !== 'string' || name.length === 0) {
      issues.push({ path: `${path}.name`, message: 'electrode name must be a non-empty string' });
      return false;
    }
    if (names.has(name)) {
      issues.push({ path: `${path}.name`, message: `duplicate electrode name "${name}"` });
      return false;
    }
    names.add(name);
    return true;
  };

  const checkSource = (spec: SingleElectrodeBase, path: string): void => {
    if ((spec.potential_V === undefined) === (spec.tiedTo === undefined)) {
      issues.push({ path: `${path}.potential_V`, message: 'give exactly one of potential_V and tiedTo' });
    } else if (spec.potential_V !== undefined) {
      checkFinite(issues, `${path}.potential_V`, spec.potential_V, 'potential');
    } else if (typeof spec.tiedTo !== 'string' || spec.tiedTo.length === 0) {
      issues.push({ path: `${path}.tiedTo`, message: 'must name another electrode' });
    }
  };

  const addSingle = (spec: SingleElectrodeBase, kind: Electrode['kind'], rect: [number, number, number, number], path: string) => {
    const draft: Draft = {
      name: spec.name,
      kind,
      rMin_m: rect[0],
      rMax_m: rect[1],
      zMin_m: rect[2],
      zMax_m: rect[3],
      transparent: kind === 'gridPlane',
      terms: [],
      path,
    };
    electrodes.push(draft);
    if (spec.tiedTo !== undefined) {
      pendingTies.push({ draft, target: spec.tiedTo, path });
      return;
    }
    const drive = drives.length;
    drives.push({ name: spec.name, potential_V: spec.potential_V as number });
    driveOf.set(spec.name, drive);
    draft.terms.push({ drive, weight: 1 });
  };

  specs.forEach((spec, index) => {
    const path = `electrodes[${index}]`;
    if (spec === null || typeof spec !== 'object') {
      issues.push({ path, message: 'electrode must be an object' });
      return;
    }
    const nameOk = claimName(spec.name, path);
    const before = issues.length;
    switch (spec.kind) {
      case 'plate': {
        checkSource(spec, path);
        checkFinite(issues, `${path}.z_m`, spec.z_m, 'plate position');
        checkPositive(issues, `${path}.thickness_m`, spec.thickness_m, 'plate thickness');
        checkNonNegative(issues, `${path}.apertureRadius_m`, spec.apertureRadius_m, 'aperture radius');
        if (checkPositive(issues, `${path}.outerRadius_m`, spec.outerRadius_m, 'plate outer radius') && isFiniteNumber(spec.apertureRadius_m)) {
          if (spec.outerRadius_m <= spec.apertureRadius_m) {
            issues.push({ path: `${path}.outerRadius_m`, message: 'plate outer radius must exceed its aperture radius' });
          }
        }
        if (issues.length === before && nameOk) {
          addSingle(spec, 'plate', [spec.apertureRadius_m, spec.outerRadius_m, spec.z_m, spec.z_m + spec.thickness_m], path);
        }
        break;
      }
      case 'ring': {
        checkSource(spec, path);
        checkPositive(issues, `${path}.innerRadius_m`, spec.innerRadius_m, 'ring inner radius');
        if (checkPositive(issues, `${path}.outerRadius_m`, spec.outerRadius_m, 'ring outer radius') && isFiniteNumber(spec.innerRadius_m)) {
          if (spec.outerRadius_m <= spec.innerRadius_m) {
            issues.push({ path: `${path}.outerRadius_m`, message: 'ring outer radius must exceed its inner radius' });
          }
        }
        if (checkFinite(issues, `${path}.zFrom_m`, spec.zFrom_m, 'ring z start') && checkFinite(issues, `${path}.zTo_m`, spec.zTo_m, 'ring z end')) {
          if (spec.zTo_m <= spec.zFrom_m) issues.push({ path: `${path}.zTo_m`, message: 'ring z end must be greater than its z start (length > 0)' });
        }
        if (issues.length === before && nameOk) {
          addSingle(spec, 'ring', [spec.innerRadius_m, spec.outerRadius_m, spec.zFrom_m, spec.zTo_m], path);
        }
        break;
      }
      case 'tube': {
        checkSource(spec, path);
        checkPositive(issues, `${path}.radius_m`, spec.radius_m, 'tube radius');
        checkPositive(issues, `${path}.wallThickness_m`, spec.wallThickness_m, 'tube wall thickness');
        if (checkFinite(issues, `${path}.zFrom_m`, spec.zFrom_m, 'tube z start') && checkFinite(issues, `${path}.zTo_m`, spec.zTo_m, 'tube z end')) {
          if (spec.zTo_m <= spec.zFrom_m) issues.push({ path: `${path}.zTo_m`, message: 'tube z end must be greater than its z start (length > 0)' });
        }
        if (issues.length === before && nameOk) {
          addSingle(spec, 'tube', [spec.radius_m, spec.radius_m + spec.wallThickness_m, spec.zFrom_m, spec.zTo_m], path);
        }
        break;
      }
      case 'gridPlane': {
        checkSource(spec, path);
        checkFinite(issues, `${path}.z_m`, spec.z_m, 'grid position');
        if (spec.radius_m !== undefined) checkPositive(issues, `${path}.radius_m`, spec.radius_m, 'grid radius');
        if (issues.length === before && nameOk) {
          addSingle(spec, 'gridPlane', [0, spec.radius_m ?? bounds.rMax_m, spec.z_m, spec.z_m], path);
        }
        break;
      }
      case 'ringStack': {
        const countOk = Number.isInteger(spec.count) && spec.count >= 1 && spec.count <= MAX_STACK_RINGS;
        if (!countOk) issues.push({ path: `${path}.count`, message: `ring count must be an integer from 1 to ${MAX_STACK_RINGS} (got ${String(spec.count)})` });
        checkFinite(issues, `${path}.firstZ_m`, spec.firstZ_m, 'first ring position');
        checkPositive(issues, `${path}.thickness_m`, spec.thickness_m, 'ring thickness');
        checkPositive(issues, `${path}.innerRadius_m`, spec.innerRadius_m, 'ring inner radius');
        if (checkPositive(issues, `${path}.outerRadius_m`, spec.outerRadius_m, 'ring outer radius') && isFiniteNumber(spec.innerRadius_m)) {
          if (spec.outerRadius_m <= spec.innerRadius_m) {
            issues.push({ path: `${path}.outerRadius_m`, message: 'ring outer radius must exceed its inner radius' });
          }
        }
        if (countOk && spec.count > 1 && checkPositive(issues, `${path}.pitch_m`, spec.pitch_m, 'ring pitch') && isFiniteNumber(spec.thickness_m)) {
          if (spec.pitch_m <= spec.thickness_m) {
            issues.push({ path: `${path}.pitch_m`, message: 'ring pitch must exceed the ring thickness, or neighbouring rings touch' });
          }
        }
        if (!Array.isArray(spec.resistorRatios)) {
          issues.push({ path: `${path}.resistorRatios`, message: 'resistor ratios must be a list of numbers' });
        } else if (countOk) {
          const n = spec.resistorRatios.length;
          if (spec.count === 1 && n !== 2) {
            issues.push({ path: `${path}.resistorRatios`, message: `a single ring needs external terminals: 2 resistors (got ${n})` });
          } else if (n !== spec.count - 1 && n !== spec.count + 1) {
            issues.push({
              path: `${path}.resistorRatios`,
              message: `need ${spec.count - 1} resistors (chain from first to last ring) or ${spec.count + 1} (external terminals); got ${n}`,
            });
          }
          (spec.resistorRatios as readonly unknown[]).forEach((ratio, k) => checkPositive(issues, `${path}.resistorRatios[${k}]`, ratio, 'resistor ratio'));
        }
        for (const end of ['start', 'end'] as const) {
          const potential = end === 'start' ? spec.startPotential_V : spec.endPotential_V;
          const tie = end === 'start' ? spec.startTiedTo : spec.endTiedTo;
          if ((potential === undefined) === (tie === undefined)) {
            issues.push({ path: `${path}.${end}Potential_V`, message: `give exactly one of ${end}Potential_V and ${end}TiedTo` });
          } else if (potential !== undefined) {
            checkFinite(issues, `${path}.${end}Potential_V`, potential, `${end} terminal potential`);
          } else if (typeof tie !== 'string' || tie.length === 0) {
            issues.push({ path: `${path}.${end}TiedTo`, message: 'must name another electrode' });
          }
        }
        if (issues.length === before && nameOk) {
          const rings: Draft[] = [];
          for (let k = 0; k < spec.count; k++) {
            claimName(`${spec.name}[${k}]`, `${path}.ring[${k}]`);
            const z0 = spec.firstZ_m + k * spec.pitch_m;
            const ring: Draft = {
              name: `${spec.name}[${k}]`,
              kind: 'ring',
              rMin_m: spec.innerRadius_m,
              rMax_m: spec.outerRadius_m,
              zMin_m: z0,
              zMax_m: z0 + spec.thickness_m,
              transparent: false,
              terms: [],
              path: `${path}.ring[${k}]`,
            };
            rings.push(ring);
            electrodes.push(ring);
          }
          pendingStacks.push({ spec, path, rings });
        }
        break;
      }
      default:
        issues.push({ path: `${path}.kind`, message: `unknown electrode kind "${String((spec as { kind?: unknown }).kind)}"` });
    }
  });

  // Ties join the drive of an electrode that has its own potential.
  const driveOfNamed = new Map(driveOf);
  for (const { draft, target, path } of pendingTies) {
    const drive = driveOf.get(target);
    if (drive === undefined) {
      issues.push({ path: `${path}.tiedTo`, message: `no electrode named "${target}" with its own potential_V to tie to` });
      continue;
    }
    draft.terms.push({ drive, weight: 1 });
    driveOfNamed.set(draft.name, drive);
  }

  for (const { spec, path, rings } of pendingStacks) {
    const terminalDrive = (end: 'start' | 'end'): number => {
      const tie = end === 'start' ? spec.startTiedTo : spec.endTiedTo;
      if (tie !== undefined) {
        const drive = driveOfNamed.get(tie);
        if (drive === undefined) {
          issues.push({ path: `${path}.${end}TiedTo`, message: `no single electrode named "${tie}" to tie the ${end} terminal to` });
          return -1;
        }
        return drive;
      }
      const drive = drives.length;
      drives.push({ name: `${spec.name}.${end}`, potential_V: (end === 'start' ? spec.startPotential_V : spec.endPotential_V) as number });
      return drive;
    };
    const startDrive = terminalDrive('start');
    const endDrive = terminalDrive('end');
    const fractions = dividerFractions(spec.resistorRatios, spec.count);
    if (startDrive < 0 || endDrive < 0 || fractions === null) continue;
    rings.forEach((ring, k) => {
      const f = fractions[k];
      if (startDrive === endDrive) ring.terms.push({ drive: startDrive, weight: 1 });
      else {
        if (f !== 1) ring.terms.push({ drive: startDrive, weight: 1 - f });
        if (f !== 0) ring.terms.push({ drive: endDrive, weight: f });
      }
    });
  }

  if (boundsOk) for (const e of electrodes) checkBounds(issues, e, bounds);
  // Electrodes whose tie failed are already reported; whether they may touch is unknown.
  for (let a = 0; a < electrodes.length; a++) {
    if (electrodes[a].terms.length === 0) continue;
    for (let b = a + 1; b < electrodes.length; b++) {
      if (electrodes[b].terms.length === 0) continue;
      if (collide(electrodes[a], electrodes[b])) {
        const verb = sameConductor(electrodes[a], electrodes[b]) ? 'overlaps' : 'touches or overlaps';
        issues.push({ path: electrodes[b].path, message: `${electrodes[b].name} ${verb} ${electrodes[a].name}` });
      }
    }
  }

  return issues.length > 0 ? { ok: false, issues } : { ok: true, layout: { electrodes, drives } };
}

/** Problems only, for callers that just want to check user geometry. */
export function validateElectrodes(specs: readonly ElectrodeSpec[], bounds: DomainBounds): FieldIssue[] {
  const result = buildLayout(specs, bounds);
  return result.ok ? [] : result.issues;
}

/** Drive voltages as set in the specs, in drive order. */
export function defaultDriveVoltages(layout: ElectrodeLayout): Float64Array {
  const out = new Float64Array(layout.drives.length);
  layout.drives.forEach((d, k) => (out[k] = d.potential_V));
  return out;
}

/** Electrode potentials for the given drive voltages (writes into `out`, one entry per electrode). */
export function electrodePotentials(layout: ElectrodeLayout, driveVoltages_V: ArrayLike<number>, out: Float64Array): Float64Array {
  const electrodes = layout.electrodes;
  for (let e = 0; e < electrodes.length; e++) {
    const terms = electrodes[e].terms;
    let v = 0;
    for (let t = 0; t < terms.length; t++) v += terms[t].weight * driveVoltages_V[terms[t].drive];
    out[e] = v;
  }
  return out;
}
