/** Shared by the UI unit tests: the shipped demo presets, validated. */
import { readFileSync } from 'node:fs';
import { parsePresetText } from '../../src/presets/load';
import type { Preset } from '../../src/presets/schema';

export const DEMO_FILES = [
  'demo-linear-delayed',
  'demo-reflectron-single',
  'demo-reflectron-dual',
  'demo-peptide-isotopes',
  'demo-gridless-mirror',
  'demo-aperture-source',
] as const;

export function demoText(name: (typeof DEMO_FILES)[number]): string {
  return readFileSync(new URL(`../../presets/${name}.json`, import.meta.url), 'utf8');
}

export function demoPreset(name: (typeof DEMO_FILES)[number]): Preset {
  const parsed = parsePresetText(demoText(name));
  if (!parsed.ok) throw new Error(`${name} does not load: ${JSON.stringify(parsed.issues)}`);
  return parsed.value;
}
