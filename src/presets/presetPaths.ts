/**
 * Dotted paths into a preset (`source.extraction.delay_ns`), as types generated from the preset
 * schema's own type: a control, a scan axis or a hint that names a path the schema does not have
 * is a type error. Array entries are addressed by index (`ions.species[2].mz`); paths stop at other
 * arrays (tables, coefficient and calibrant lists are edited whole).
 */
import type { Preset } from './schema';

type Depth = [never, 0, 1, 2, 3, 4, 5, 6];

/** Every path into T: each key, and the key joined to every path into its (non-null) value. */
export type PathOf<T, D extends number = 6> = [D] extends [never]
  ? never
  : T extends readonly unknown[]
    ? never
    : T extends object
      ? { [K in keyof T & string]-?: K | `${K}.${PathOf<NonNullable<T[K]>, Depth[D]>}` }[keyof T & string]
      : never;

type Species = Preset['ions']['species'][number];

/** Species i of the species list. */
export type SpeciesBase = `ions.species[${number}]`;
/** A path inside species i of the species list. */
export type SpeciesPath = SpeciesBase | `${SpeciesBase}.${PathOf<Species>}`;

/** A path anywhere in a preset, species entries included. */
export type PresetPath = PathOf<Preset> | SpeciesPath;

/** Identity at run time; at compile time it checks that `path` is a path of the preset schema. */
export function presetPath<P extends PresetPath>(path: P): P {
  return path;
}
