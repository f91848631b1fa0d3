/**
 * Reading and writing a preset document by its JSON path (`ions.species[2].mz`), the same path
 * form that validation issues carry, so an issue can be shown on the control that edits it.
 */

export type PathKey = string | number;

export function parsePath(path: string): PathKey[] {
  const keys: PathKey[] = [];
  for (const part of path.split('.')) {
    const match = /^([^[\]]*)((?:\[\d+\])*)$/.exec(part);
    if (!match) throw new Error(`bad path "${path}"`);
    if (match[1]) keys.push(match[1]);
    for (const index of match[2].matchAll(/\[(\d+)\]/g)) keys.push(Number(index[1]));
  }
  return keys;
}

type Container = Record<PathKey, unknown>;

const isContainer = (node: unknown): node is Container => typeof node === 'object' && node !== null;

export function getAt(doc: unknown, path: string): unknown {
  let node = doc;
  for (const key of parsePath(path)) {
    if (!isContainer(node) || !Object.hasOwn(node, key)) return undefined;
    node = node[key];
  }
  return node;
}

/** Sets a value, creating plain objects on the way; refuses keys that would reach the prototype. */
export function setAt(doc: unknown, path: string, value: unknown): void {
  const keys = parsePath(path);
  let node = doc;
  for (let i = 0; i < keys.length; i++) {
    const key = keys[i];
    if (key === '__proto__' || key === 'constructor' || key === 'prototype') throw new Error(`refused key "${key}"`);
    if (!isContainer(node)) throw new Error(`cannot set "${path}": not an object at "${String(keys[i - 1])}"`);
    if (i === keys.length - 1) {
      node[key] = value;
      return;
    }
    if (!isContainer(node[key])) node[key] = typeof keys[i + 1] === 'number' ? [] : {};
    node = node[key];
  }
}

export function deleteAt(doc: unknown, path: string): void {
  const keys = parsePath(path);
  const last = keys.pop();
  let node = doc;
  for (const key of keys) {
    if (!isContainer(node)) return;
    node = node[key];
  }
  if (isContainer(node) && last !== undefined) delete node[last];
}

/** A deep copy of JSON data (presets are plain JSON: no dates, maps or typed arrays). */
export function cloneJson<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}
