import { writeFileSync, mkdirSync } from 'node:fs';
import { demoScenario } from '../server/seed/scenario';

/**
 * npm run examples: writes the example upload files of docs/uploads.md from the demo scenario,
 * so they always fit the demo's binning (a test uploads them).
 */
const search = demoScenario().analyses.find((a) => a.slug === 'vireon-search')!;
const nominal = search.model.templates.find((t) => t.region === 'CR-shower' && t.process === 'continuum')!.nominal;
const r = (x: number) => Math.round(x * 100) / 100;
const lines = ['region,process,kind,bin,up,down', 'CR-shower,showerpair,scale,,1.045,0.962'];
nominal.forEach((n, b) => {
  const tilt = 0.03 * ((2 * b) / (nominal.length - 1) - 1);
  lines.push(`CR-shower,continuum,shape,${b + 1},${r(n * (1 + tilt))},${r(n * (1 - tilt))}`);
});
mkdirSync('docs/examples', { recursive: true });
writeFileSync('docs/examples/variations.csv', lines.join('\n') + '\n');
writeFileSync(
  'docs/examples/variations.json',
  JSON.stringify(
    {
      effects: [
        { region: 'CR-shower', process: 'showerpair', kind: 'scale', up: 1.045, down: 0.962 },
        { region: 'CR-shower', process: 'continuum', kind: 'shape', up: nominal.map((n, b) => r(n * (1 + 0.03 * ((2 * b) / (nominal.length - 1) - 1)))) },
      ],
    },
    null,
    2,
  ) + '\n',
);
const edges = search.model.regions.find((x) => x.key === 'CR-shower')!.edges;
writeFileSync('docs/examples/templates.csv', ['region,process,bin,nominal,variance', ...nominal.map((n, b) => `CR-shower,continuum,${b + 1},${n},${r(n * 0.01)}`)].join('\n') + '\n');
writeFileSync('docs/examples/observed.csv', ['region,bin,observed', ...edges.slice(1).map((_, b) => `CR-shower,${b + 1},${Math.round(nominal[b] * 1.02)}`)].join('\n') + '\n');
// a signal hypothesis of the search as the Model screen takes it: its templates CSV and its effects (JSON)
const hypothesis = search.model.signalHypotheses!.points.find((p) => p.key === 'm1250')!;
writeFileSync(
  'docs/examples/hypothesis-m1250.csv',
  ['region,process,bin,nominal,variance', ...hypothesis.templates.flatMap((t) => t.nominal.map((n, b) => `${t.region},${t.process},${b + 1},${n},${t.variance![b]}`))].join('\n') + '\n',
);
writeFileSync('docs/examples/hypothesis-m1250-effects.json', JSON.stringify(hypothesis.effects, null, 2) + '\n');
console.log('wrote docs/examples/{variations.csv,variations.json,templates.csv,observed.csv,hypothesis-m1250.csv,hypothesis-m1250-effects.json}');
