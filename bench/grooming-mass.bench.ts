// Groomed-mass distributions of the toy generator's boosted objects (`generate --boosted`,
// invented particles of mass 90 GeV with two prongs and 170 GeV with three; fictional Halden
// ring, invented data), before and after grooming, at pileup 0 and 200: per kind and pileup,
// events with one boosted object and one toy hard jet each, anti-kt R = 1.0 (ptMin 200 GeV) in the engine with
// trimming 0.2:0.05 and soft drop 0.1:0 (the common settings); the hardest jet of each event,
// when its pt is at least LEADING_PT_MIN_GEV, gives one entry. Mean and width (standard
// deviation) of the plain, trimmed and soft-dropped mass, and the central 68 % (16th to 84th
// percentile), which the tails do not move. Last, the toy decay alone, without jets: the mass of
// its deposits as they are and once binned into the default grid's towers (tower centres, as
// the clustering sees them), which shows what the towers' granularity alone does to the peak.
//
//   npm run build:host && node dist/bench/grooming-mass.bench.js [--events 200]

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { GroomingClusterer } from '../host/clustering/grooming/groomer.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { generateEvents } from '../host/generator/generate.js';
import { addBoostedObjects, BOOSTED_THREE_PRONG_MASS_GEV, BOOSTED_TWO_PRONG_MASS_GEV } from '../host/generator/boosted.js';
import { makeGridTables } from '../host/clustering/grid.js';
import { makeRandom } from '../host/random.js';
import { DEFAULT_GRID, type ClusterSettings, type GroomingSettings } from '../host/types.js';

const eventsAt = process.argv.indexOf('--events');
const EVENTS = eventsAt >= 0 ? Number(process.argv[eventsAt + 1]) : 200;
const LEADING_PT_MIN_GEV = 300;
const RADIUS = 1.0;
const settings: ClusterSettings = { p: -1, radius: RADIUS, ptMin: 200, threshold: 0, recombination: 'e' };
const grooming: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } };
const clusterer = new GroomingClusterer(new WasmClusterer(DEFAULT_GRID, settings), new EngineGroomer(DEFAULT_GRID, grooming, RADIUS));

interface MassSpread { mean: number; width: number; low: number; high: number }

function meanAndWidth(values: number[]): MassSpread {
  const mean = values.reduce((s, v) => s + v, 0) / values.length;
  const variance = values.reduce((s, v) => s + (v - mean) * (v - mean), 0) / values.length;
  const sorted = [...values].sort((a, b) => a - b);
  const at = (fraction: number) => sorted[Math.floor(fraction * (sorted.length - 1))];
  return { mean, width: Math.sqrt(variance), low: at(0.16), high: at(0.84) };
}

/** the invariant mass of massless deposits (eta, phi, et) */
function depositMass(eta: number[], phi: number[], et: number[]): number {
  let px = 0, py = 0, pz = 0, energy = 0;
  for (let k = 0; k < et.length; k++) {
    px += et[k] * Math.cos(phi[k]);
    py += et[k] * Math.sin(phi[k]);
    pz += et[k] * Math.sinh(eta[k]);
    energy += et[k] * Math.cosh(eta[k]);
  }
  return Math.sqrt(Math.max(0, energy * energy - px * px - py * py - pz * pz));
}

/** the toy decay's mass from its deposits, and from them binned into towers at the towers' centres */
function decayAlone(prongs: 2 | 3, objects: number): { deposits: MassSpread; towers: MassSpread } {
  const tables = makeGridTables(DEFAULT_GRID);
  const { etaMin, etaMax, etaBins, phiBins } = DEFAULT_GRID;
  const random = makeRandom(40 + prongs);
  const deposits: number[] = [];
  const towers: number[] = [];
  for (let k = 0; k < objects; k++) {
    const eta: number[] = [], phi: number[] = [], et: number[] = [];
    addBoostedObjects(random, 1, eta, phi, et, prongs);
    deposits.push(depositMass(eta, phi, et));
    const towerEt = new Map<number, number>();
    for (let d = 0; d < et.length; d++) {
      const ieta = Math.floor(((eta[d] - etaMin) / (etaMax - etaMin)) * etaBins);
      if (ieta < 0 || ieta >= etaBins) continue; // outside acceptance, as the generator counts it
      const wrapped = ((phi[d] % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI);
      const tower = ieta * phiBins + Math.min(phiBins - 1, Math.floor((wrapped / (2 * Math.PI)) * phiBins));
      towerEt.set(tower, (towerEt.get(tower) ?? 0) + et[d]);
    }
    const t = [...towerEt.keys()];
    towers.push(depositMass(t.map((i) => tables.etaCentre[Math.floor(i / phiBins)]), t.map((i) => tables.phiCentre[i % phiBins]), [...towerEt.values()]));
  }
  return { deposits: meanAndWidth(deposits), towers: meanAndWidth(towers) };
}

interface Row {
  prongs: 2 | 3;
  massGeV: number;
  pileup: number;
  jets: number;
  plain: MassSpread;
  trimmed: MassSpread;
  softDropped: MassSpread;
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

const cell = (d: MassSpread) => `${d.mean.toFixed(1)} ± ${d.width.toFixed(1)} (${d.low.toFixed(0)}-${d.high.toFixed(0)})`;
console.log(`leading anti-kt R = ${RADIUS} jet (pt >= ${LEADING_PT_MIN_GEV} GeV) of ${EVENTS} toy events per row, one invented boosted object each; mass mean ± width (16th-84th percentile) in GeV`);
console.log('| object | pileup | jets | plain | trimmed 0.2:0.05 | soft drop 0.1:0 |');
console.log('|---|---|---|---|---|---|');
for (const r of rows) console.log(`| ${r.prongs} prongs, ${r.massGeV} GeV | ${r.pileup} | ${r.jets} | ${cell(r.plain)} | ${cell(r.trimmed)} | ${cell(r.softDropped)} |`);
const alone = ([2, 3] as const).map((prongs) => ({ prongs, ...decayAlone(prongs, 2000) }));
for (const a of alone) console.log(`the toy ${a.prongs}-prong decay alone, 2000 objects: deposits ${cell(a.deposits)}, binned into towers ${cell(a.towers)} GeV`);

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'grooming-mass.json'), JSON.stringify({ events: EVENTS, leadingPtMinGeV: LEADING_PT_MIN_GEV, rows, decayAlone: alone }, null, 2));
console.log(`written ${join(resultsDir, 'grooming-mass.json')}`);
