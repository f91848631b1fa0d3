/**
 * `npm run golden`: rewrites tests/regression/presetGolden.fixture.json from the current engine.
 * Only when a number is meant to change (a physics fix or a deliberate model change), never to make
 * a refactor pass: the fixture is the record that a refactor changed no number.
 */
import { writeFileSync } from 'node:fs';
import { GOLDEN_FIXTURE_URL, goldenCases, type GoldenFixture } from '../tests/regression/presetGoldenRuns';

const fixture: GoldenFixture = {};
for (const [name, run] of Object.entries(goldenCases())) fixture[name] = run();
writeFileSync(GOLDEN_FIXTURE_URL, JSON.stringify(fixture, null, 1) + '\n');
process.stdout.write(`wrote ${Object.keys(fixture).length} cases to ${GOLDEN_FIXTURE_URL.pathname}\n`);
