/**
 * The shipped demo setups, bundled with the app and validated like any other input. The last two
 * have solved-field regions (a gridless mirror, an aperture source): their first run solves the
 * fields, later voltage changes only superpose them.
 */
import demoLinear from '../../../presets/demo-linear-delayed.json';
import demoSingle from '../../../presets/demo-reflectron-single.json';
import demoDual from '../../../presets/demo-reflectron-dual.json';
import demoIsotopes from '../../../presets/demo-peptide-isotopes.json';
import demoGridless from '../../../presets/demo-gridless-mirror.json';
import demoAperture from '../../../presets/demo-aperture-source.json';
import demoFragmentsReflectron from '../../../presets/demo-fragments-reflectron.json';
import demoFragmentsLinear from '../../../presets/demo-fragments-linear.json';
import { validatePreset } from '../../presets/load';
import { formatIssues } from '../../presets/issues';
import type { Preset } from '../../presets/schema';

export interface Demo {
  readonly id: 'linear' | 'single' | 'dual' | 'isotopes' | 'gridless' | 'aperture' | 'fragmentsReflectron' | 'fragmentsLinear';
  readonly preset: Preset;
}

function checked(doc: unknown, id: string): Preset {
  const result = validatePreset(doc);
  if (!result.ok) throw new Error(`shipped demo "${id}" does not validate:\n${formatIssues(result.issues)}`);
  return result.value;
}

let cache: Demo[] | null = null;

/** The demo the app opens on comes first. */
export function demos(): Demo[] {
  cache ??= [
    { id: 'linear', preset: checked(demoLinear, 'linear') },
    { id: 'single', preset: checked(demoSingle, 'single') },
    { id: 'dual', preset: checked(demoDual, 'dual') },
    { id: 'isotopes', preset: checked(demoIsotopes, 'isotopes') },
    { id: 'gridless', preset: checked(demoGridless, 'gridless') },
    { id: 'aperture', preset: checked(demoAperture, 'aperture') },
    { id: 'fragmentsReflectron', preset: checked(demoFragmentsReflectron, 'fragmentsReflectron') },
    { id: 'fragmentsLinear', preset: checked(demoFragmentsLinear, 'fragmentsLinear') },
  ];
  return cache;
}

export function demo(id: Demo['id']): Preset {
  return structuredClone(demos().find((d) => d.id === id)!.preset);
}
