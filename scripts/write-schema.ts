/**
 * Writes presets/preset.schema.json from the validator, so the published JSON Schema can never
 * drift from what the loader accepts (a test compares the file with a fresh rendering).
 */
import { writeFileSync } from 'node:fs';
import { renderPresetJsonSchema } from '../src/presets/jsonSchema';

const target = new URL('../presets/preset.schema.json', import.meta.url);
writeFileSync(target, renderPresetJsonSchema());
process.stdout.write(`wrote ${target.pathname}\n`);
