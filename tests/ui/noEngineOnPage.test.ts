/**
 * The page never runs the engine: no module under src/ui imports (other than for types) the physics,
 * the fields, the ion sampling, the preset compiler, the run itself or the modules that trace for the
 * 3D view and the focus scan. Those run in the worker; the page draws what RunOutput carries. The
 * fate vocabulary (src/physics/fates.ts: codes and their descriptions) is data and may be read.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');

const FORBIDDEN: readonly RegExp[] = [
  /^src\/physics\//,
  /^src\/fields\//,
  /^src\/ions\//,
  /^src\/presets\/compile\.ts$/,
  /^src\/simulation\/run\.ts$/,
  /^src\/simulation\/runOutput\.ts$/,
  /^src\/simulation\/scene\//,
  /^src\/analysis\/focus(Scan)?\.ts$/,
];
const ALLOWED: readonly RegExp[] = [/^src\/physics\/fates\.ts$/, /^src\/simulation\/scene\/sceneData\.ts$/];

/** Module specifiers of the imports (and re-exports) of `source` that bring in values, not only types. */
export function valueImports(source: string): string[] {
  const found: string[] = [];
  const statement = /(?:^|\n)\s*(import|export)\s+([^;]*?)\s+from\s+['"]([^'"]+)['"]/g;
  for (const m of source.matchAll(statement)) {
    const clause = m[2].trim();
    if (/^type\s/.test(clause)) continue;
    // `import { type A, type B } from` brings in no value either.
    const braces = /^\{([^}]*)\}$/.exec(clause);
    if (braces && braces[1].split(',').map((s) => s.trim()).filter(Boolean).every((s) => s.startsWith('type '))) continue;
    found.push(m[3]);
  }
  for (const m of source.matchAll(/(?:^|\n)\s*import\s+['"]([^'"]+)['"]/g)) found.push(m[1]);
  for (const m of source.matchAll(/import\(\s*['"]([^'"]+)['"]\s*\)/g)) found.push(m[1]);
  return found;
}

function sourceFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? sourceFiles(join(dir, e.name)) : /\.ts$/.test(e.name) ? [join(dir, e.name)] : []));
}

function resolved(fromFile: string, specifier: string): string | null {
  if (!specifier.startsWith('.')) return null;
  const target = relative(ROOT, resolve(dirname(fromFile), specifier)).replaceAll('\\', '/');
  return /\.\w+$/.test(target) ? target : `${target}.ts`;
}

describe('no engine on the page', () => {
  it('the import scanner tells value imports from type-only ones', () => {
    const sample = [
      "import { traceEnsemble } from '../../physics/regions/driver';",
      "import type { AnalyserModel } from '../../physics/analyser';",
      "import { type Trajectory } from '../../physics/trajectory';",
      "import {\n  createExactPlan,\n  type ExactPlan,\n} from '../../physics/exactEngine';",
      "export { MAX_SEGMENTS } from '../../physics/trajectory';",
      "export type { Region } from '../../physics/trajectory';",
      "const lazy = () => import('../../fields/laplace');",
    ].join('\n');
    expect(valueImports(sample)).toEqual(['../../physics/regions/driver', '../../physics/exactEngine', '../../physics/trajectory', '../../fields/laplace']);
  });

  it('no module under src/ui imports an engine module except for its types', () => {
    const offending: string[] = [];
    for (const file of sourceFiles(join(ROOT, 'src/ui'))) {
      for (const specifier of valueImports(readFileSync(file, 'utf8'))) {
        const target = resolved(file, specifier);
        if (target && FORBIDDEN.some((r) => r.test(target)) && !ALLOWED.some((r) => r.test(target))) offending.push(`${relative(ROOT, file)} → ${target}`);
      }
    }
    expect(offending).toEqual([]);
  });
});
