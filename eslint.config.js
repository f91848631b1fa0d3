// Lint setup: typescript-eslint recommended rules on every TypeScript file.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'coverage/**', 'bench/out/**', 'bench/.engine-figures.mjs', 'bench/.source-trace.mjs'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.ts'],
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      'no-constant-condition': ['error', { checkLoops: false }],
    },
  },
  {
    // Import boundaries: the core (every folder of src/ but src/ui) and the workers never reach into
    // the page's code or its UI-only libraries, so the worker and the CLI can run them.
    files: ['src/**/*.ts', 'workers/**/*.ts'],
    ignores: ['src/ui/**'],
    rules: {
      '@typescript-eslint/no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['**/ui', '**/ui/**'], message: 'The core and the workers must not import src/ui (the page).' },
            { group: ['three', 'three/*', 'lil-gui', 'uplot', 'uplot/*', 'idb'], message: 'UI-only library: keep it in src/ui.' },
          ],
        },
      ],
    },
  },
  {
    // The page draws and reports what the worker computed: it runs no engine (types and the fate and
    // section vocabularies are fine).
    // (tests/ui/noEngineOnPage.test.ts checks the page's imports more strictly still.)
    files: ['src/ui/**/*.ts'],
    rules: {
      '@typescript-eslint/no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: [
                '**/physics/exactEngine',
                '**/physics/tracer',
                '**/physics/numericRegions',
                '**/physics/pulsedStage',
                '**/physics/solvedMirrorMap',
                '**/physics/integrator',
                '**/physics/integrator/*',
                '**/physics/spaceCharge/*',
                '**/physics/regions/*',
                '!**/physics/regions/contract',
                '**/simulation/run',
                '**/simulation/singleIon',
                '**/simulation/scene/drawnPaths',
                '**/simulation/scene/layout',
                '**/simulation/scene/runScene',
                '**/analysis/focusScan',
              ],
              allowTypeImports: true,
              message: 'The page runs no engine: ask the worker (src/tuning/workerClient.ts) for the run.',
            },
            { group: ['**/physics/trajectory'], importNames: ['traceTrajectory'], message: 'Paths are traced in the worker: ask for them with the run.' },
            { group: ['**/simulation/pulseReach'], importNames: ['pulseReach'], message: 'The hold-phase count is computed in the worker.' },
          ],
        },
      ],
    },
  },
  {
    // Tests build malformed documents on purpose.
    files: ['tests/**/*.ts'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  {
    files: ['**/*.js', '**/*.mjs'],
    languageOptions: { globals: { process: 'readonly', console: 'readonly' } },
  },
);
