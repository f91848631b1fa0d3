/**
 * The panel's controls: the fixed ones (./fields.ts) plus groups that other modules register (for
 * example detector or acquisition controls kept in their own module). A registered descriptor is
 * typed like the fixed ones (its path a PresetPath) and shows in its group after them, in the order
 * registered. Register before the panel is built (at module load of the registering module).
 */
import { FIELDS, type FieldSpec } from './fields';

const registered: FieldSpec[] = [];

/** Add a group of controls; a key already in use is refused (keys name the panel's bound properties). */
export function registerFields(fields: readonly FieldSpec[]): void {
  const taken = new Set([...FIELDS, ...registered].map((f) => f.key));
  for (const f of fields) {
    if (taken.has(f.key)) throw new Error(`panel control key "${f.key}" is already registered`);
    taken.add(f.key);
  }
  registered.push(...fields);
}

/** Every control of the panel except the per-species ones, fixed first. */
export function panelFields(): readonly FieldSpec[] {
  return [...FIELDS, ...registered];
}
