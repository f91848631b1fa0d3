/** JSON Schema (draft 2020-12) rendering of the preset validator, for editors and other tools. */
import { z } from 'zod';
import { presetSchema } from './schema';

export function renderPresetJsonSchema(): string {
  const schema = z.toJSONSchema(presetSchema, { io: 'input', target: 'draft-2020-12' });
  const doc = {
    ...schema,
    $id: 'preset.schema.json',
    title: 'TOF flight-tube simulator preset',
    description: 'Analyser, ion population and run settings. Units are part of every key name (mm, V, ns, m/s, eV).',
  };
  return JSON.stringify(doc, null, 2) + '\n';
}
