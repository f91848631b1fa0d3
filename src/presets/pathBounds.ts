/**
 * The numeric bounds the validator enforces at a preset path, read from the validator's own JSON
 * Schema (zod's rendering of ./schema, the same one `npm run schema` writes), so the panel's hints
 * quote exactly what the check allows. Paths are the panel's: `drift.length_mm`, `mirror.backPlate_V`,
 * `ions.species[0].mz`. Where branches of a union hold the path with different bounds (a gridded and
 * a solved mirror's return length), the document picks the branch by its discriminating values.
 */
import { z } from 'zod';
import type { NumberBounds } from './rangeWords';
import { presetSchema } from './schema';

type JsonSchema = {
  type?: string | string[];
  properties?: Record<string, JsonSchema>;
  items?: JsonSchema;
  prefixItems?: JsonSchema[];
  oneOf?: JsonSchema[];
  anyOf?: JsonSchema[];
  allOf?: JsonSchema[];
  const?: unknown;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
};

let rendered: JsonSchema | null = null;

function root(): JsonSchema {
  rendered ??= z.toJSONSchema(presetSchema, { io: 'input', target: 'draft-2020-12' }) as JsonSchema;
  return rendered;
}

function keysOf(path: string): (string | number)[] {
  const keys: (string | number)[] = [];
  for (const part of path.split('.')) {
    const m = /^([^[\]]+)((?:\[\d+\])*)$/.exec(part);
    if (!m) return [];
    keys.push(m[1]);
    for (const index of m[2].matchAll(/\[(\d+)\]/g)) keys.push(Number(index[1]));
  }
  return keys;
}

const child = (doc: unknown, key: string | number): unknown => (doc !== null && typeof doc === 'object' && Object.hasOwn(doc, key) ? (doc as Record<string | number, unknown>)[key] : undefined);

/** A union branch fits the document unless one of its constant (discriminating) properties differs from it. */
function fits(branch: JsonSchema, doc: unknown): boolean {
  if (doc === undefined || !branch.properties) return true;
  return Object.entries(branch.properties).every(([key, p]) => p.const === undefined || child(doc, key) === p.const);
}

function find(node: JsonSchema | undefined, keys: readonly (string | number)[], doc: unknown): JsonSchema | null {
  if (!node) return null;
  for (const branch of [...(node.oneOf ?? []), ...(node.anyOf ?? []), ...(node.allOf ?? [])]) {
    if (!fits(branch, doc)) continue;
    const hit = find(branch, keys, doc);
    if (hit) return hit;
  }
  if (keys.length === 0) return node.type === 'number' || node.type === 'integer' ? node : null;
  const [key, ...rest] = keys;
  if (typeof key === 'number') return find(node.prefixItems?.[key] ?? node.items, rest, child(doc, key));
  return find(node.properties?.[key], rest, child(doc, key));
}

/** Bounds at `path` (in the branch `doc` selects, if given), or null when the validator has no bounded number there. */
export function numberBoundsAt(path: string, doc?: unknown): NumberBounds | null {
  const leaf = find(root(), keysOf(path), doc);
  let bounds: NumberBounds | null = null;
  if (leaf && (leaf.minimum !== undefined || leaf.exclusiveMinimum !== undefined) && leaf.maximum !== undefined) {
    bounds = {
      min: leaf.exclusiveMinimum ?? leaf.minimum!,
      max: leaf.maximum,
      exclusiveMin: leaf.exclusiveMinimum !== undefined,
      integer: leaf.type === 'integer',
    };
  }
  return bounds;
}
