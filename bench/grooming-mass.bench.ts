// Groomed-mass distributions of the toy generator's boosted objects (`generate --boosted`,
// invented particles of mass 90 GeV with two prongs and 170 GeV with three; fictional Halden
// ring, invented data), before and after grooming, at pileup 0 and 200: per kind and pileup,
// events with one boosted object and one toy hard jet each, anti-kt R = 1.0 (ptMin 200 GeV) in the engine with
// trimming 0.2:0.05 and soft drop 0.1:0 (the common settings); the hardest jet of each event,
// when its pt is at least LEADING_PT_MIN_GEV, gives one entry. Mean and width (standard
// deviation) of the plain, trimmed and soft-dropped mass.
//
//   npm run build:host && node dist/bench/grooming-mass.bench.js [--events 200]

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { GroomingClusterer } from '../host/clustering/grooming/groomer.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { generateEvents } from '../host/generator/generate.js';
import { BOOSTED_THREE_PRONG_MASS_GEV, BOOSTED_TWO_PRONG_MASS_GEV } from '../host/generator/boosted.js';
import { DEFAULT_GRID, type ClusterSettings, type GroomingSettings } from '../host/types.js';

const eventsAt = process.argv.indexOf('--events');
const EVENTS = eventsAt >= 0 ? Number(process.argv[eventsAt + 1]) : 200;
const LEADING_PT_MIN_GEV = 300;
const RADIUS = 1.0;
const settings: ClusterSettings = { p: -1, radius: RADIUS, ptMin: 200, threshold: 0, recombination: 'e' };
const grooming: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } };
const clusterer = new GroomingClusterer(new WasmClusterer(DEFAULT_GRID, settings), new EngineGroomer(DEFAULT_GRID, grooming, RADIUS));

function meanAndWidth(values: number[]): { mean: number; width: number } {
  const mean = values.reduce((s, v) => s + v, 0) / values.length;
  const variance = values.reduce((s, v) => s + (v - mean) * (v - mean), 0) / values.length;
  return { mean, width: Math.sqrt(variance) };
}

interface Row {
  prongs: 2 | 3;
  massGeV: number;
  pileup: number;
  jets: number;
  plain: { mean: number; width: number };
  trimmed: { mean: number; width: number };
  softDropped: { mean: number; width: number };
}

const rows: Row[] = [];
for (const prongs of [2, 3] as const) {
  for (const pileup of [0, 200]) {
    const plain: number[] = [];
    const trimmed: number[] = [];
    const softDropped: number[] = [];
    for (const event of generateEvents(DEFAULT_GRID, { events: EVENTS, pileup, seed: 12 + prongs, maxHardJets: 1, boosted: 1, boostedProngs: prongs })) {
      const jets = clusterer.cluster(event.towerIndex, event.towerEt);
      if (jets.count === 0 || jets.pt[0] < LEADING_PT_MIN_GEV) continue;
      plain.push(jets.mass[0]);
      trimmed.push(jets.trim!.mass[0]);
      softDropped.push(jets.softDrop!.mass[0]);
    }
    rows.push({
      prongs, massGeV: prongs === 2 ? BOOSTED_TWO_PRONG_MASS_GEV : BOOSTED_THREE_PRONG_MASS_GEV, pileup, jets: plain.length,
      plain: meanAndWidth(plain), trimmed: meanAndWidth(trimmed), softDropped: meanAndWidth(softDropped),
    });
  }
}

const cell = (d: { mean: number; width: number }) => `${d.mean.toFixed(1)} ± ${d.width.toFixed(1)}`;
console.log(`leading anti-kt R = ${RADIUS} jet (pt >= ${LEADING_PT_MIN_GEV} GeV) of ${EVENTS} toy events per row, one invented boosted object each; mass mean ± width in GeV`);
console.log('| object | pileup | jets | plain | trimmed 0.2:0.05 | soft drop 0.1:0 |');
console.log('|---|---|---|---|---|---|');
for (const r of rows) console.log(`| ${r.prongs} prongs, ${r.massGeV} GeV | ${r.pileup} | ${r.jets} | ${cell(r.plain)} | ${cell(r.trimmed)} | ${cell(r.softDropped)} |`);

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'grooming-mass.json'), JSON.stringify({ events: EVENTS, leadingPtMinGeV: LEADING_PT_MIN_GEV, rows }, null, 2));
console.log(`written ${join(resultsDir, 'grooming-mass.json')}`);
