import { speciesFromFormula } from '../src/ions/chemistry';
for (const [f, a] of process.argv.slice(2).map((x) => x.split(':'))) {
  const r = speciesFromFormula({ formula: f, adduct: a ?? 'protonated', charge: 1, polarity: 'positive' });
  console.log(f, a ?? 'protonated', r.ok ? String(r.value.monoisotopicMz) : JSON.stringify(r.issues));
}
