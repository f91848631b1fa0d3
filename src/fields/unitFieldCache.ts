/**
 * Unit fields cached by electrode geometry and mesh (not by voltages): a voltage change (a scan
 * step, a slider in the app) reuses the solved unit fields and only re-superposes them.
 * The key is the mesh spec and the electrode specs with every potential value replaced by a
 * marker, so two presets that differ only in voltages share one entry.
 */
import { buildLayout } from './electrodes';
import type { ElectrodeSpec, FieldIssue } from './electrodes';
import type { MeshSpec } from './mesh';
import { rasterize } from './rasterize';
import { solveUnitFields, type UnitFieldSet } from './unitSolutions';

export type CachedFieldsResult = { readonly ok: true; readonly set: UnitFieldSet; readonly cached: boolean } | { readonly ok: false; readonly issues: FieldIssue[] };

/** Relative residual every cached unit field is solved to (definition in laplace.ts). */
export const CACHED_FIELD_TOLERANCE = 1e-10;
/** Geometries kept; each entry holds (drives) node arrays, a few MB for the shipped presets. */
const CAPACITY = 6;

const cache = new Map<string, UnitFieldSet>();
export const fieldCacheStats = { solves: 0, hits: 0 };

const POTENTIAL_KEYS = new Set(['potential_V', 'startPotential_V', 'endPotential_V']);

/** Geometry key: potentials become a marker (their presence decides the drive structure, their value does not). */
export function geometryKey(mesh: MeshSpec, specs: readonly ElectrodeSpec[]): string {
  return JSON.stringify({ mesh, specs }, (key, value: unknown) => (POTENTIAL_KEYS.has(key) ? 'V' : value));
}

/** Unit fields for the geometry, solved on first use and then taken from the cache. */
export function cachedUnitFields(mesh: MeshSpec, specs: readonly ElectrodeSpec[]): CachedFieldsResult {
  const key = geometryKey(mesh, specs);
  const hit = cache.get(key);
  const layout = buildLayout(specs, mesh);
  if (!layout.ok) return { ok: false, issues: layout.issues };
  if (hit) {
    fieldCacheStats.hits++;
    // Most recently used last, so that eviction drops the oldest.
    cache.delete(key);
    cache.set(key, hit);
    // The cached mesh carries the layout of the first preset; the drive order is the same for every
    // preset with this key (it follows the spec order), so only the voltages differ.
    return { ok: true, set: hit, cached: true };
  }
  const raster = rasterize(mesh, layout.layout);
  if (!raster.ok) return { ok: false, issues: raster.issues };
  const set = solveUnitFields(raster.mesh, { relativeTolerance: CACHED_FIELD_TOLERANCE });
  fieldCacheStats.solves++;
  cache.set(key, set);
  while (cache.size > CAPACITY) cache.delete(cache.keys().next().value as string);
  return { ok: true, set, cached: false };
}

/** Drive voltages of the layout built from `specs` (same order as the cached unit fields). */
export function driveVoltagesOf(mesh: MeshSpec, specs: readonly ElectrodeSpec[]): Float64Array | null {
  const layout = buildLayout(specs, mesh);
  if (!layout.ok) return null;
  return Float64Array.from(layout.layout.drives, (d) => d.potential_V);
}
