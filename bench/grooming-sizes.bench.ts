// Where the groomers' time goes, by jet size: the engine's and the reference's trimming and soft
// drop timed jet by jet on the large-R jets (anti-kt R = 1.0, every jet) of the toy generator's
// pileup-200 events with 2 invented boosted objects each (fictional Halden ring; invented data),
// grouped by the jet's number of towers. Each figure: median over rounds of the mean µs per jet
// of the group.
//
//   npm run build && node dist/bench/grooming-sizes.bench.js [--rounds 7]

import { WasmClusterer } from '../host/clustering/engine.js';
import type { JetGroomer } from '../host/clustering/grooming/groomer.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { allocateJetSet } from '../host/clustering/jet-set.js';
import { generateEvents } from '../host/generator/generate.js';
import { DEFAULT_GRID, type ClusterSettings, type GroomingSettings, type JetSet } from '../host/types.js';

const roundsAt = process.argv.indexOf('--rounds');
const ROUNDS = roundsAt >= 0 ? Number(process.argv[roundsAt + 1]) : 7;
const RADIUS = 1.0;
const GROUP_EDGES = [1, 10, 50, 150, 250, 400, 10000];
const TRIM: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null };
const SOFT_DROP: GroomingSettings = { trim: null, softDrop: { zCut: 0.1, beta: 0 } };

interface OneJet { jets: JetSet; towerIndex: Int32Array; towerEt: Float64Array }

const settings: ClusterSettings = { p: -1, radius: RADIUS, ptMin: 0, threshold: 0, recombination: 'e' };
const clusterer = new WasmClusterer(DEFAULT_GRID, settings);
clusterer.withTowers = true;
const groups: OneJet[][] = GROUP_EDGES.slice(1).map(() => []);
for (const event of generateEvents(DEFAULT_GRID, { events: 24, pileup: 200, seed: 16, boosted: 2 })) {
  const all = clusterer.cluster(event.towerIndex, event.towerEt);
  for (let n = 0; n < all.count; n++) {
    // one jet as its own JetSet, so that each groom() call grooms exactly it
    const jets = allocateJetSet(1);
    jets.pt[0] = all.pt[n];
    jets.towerCount[0] = all.towerCount[n];
    jets.towers = all.towers.slice(all.towerStart[n], all.towerStart[n] + all.towerCount[n]);
    const size = all.towerCount[n];
    const g = GROUP_EDGES.findIndex((edge, k) => k + 1 < GROUP_EDGES.length && size >= edge && size < GROUP_EDGES[k + 1]);
    groups[g].push({ jets, towerIndex: event.towerIndex, towerEt: event.towerEt });
  }
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function timeGroup(groomer: JetGroomer, group: OneJet[]): number {
  const began = performance.now();
  for (const j of group) groomer.groom(j.jets, j.towerIndex, j.towerEt);
  return ((performance.now() - began) * 1000) / group.length;
}

for (const [name, grooming] of [['trimming 0.2:0.05', TRIM], ['soft drop 0.1:0', SOFT_DROP]] as const) {
  const engine = new EngineGroomer(DEFAULT_GRID, grooming, RADIUS);
  const reference = new ReferenceGroomer(DEFAULT_GRID, grooming, RADIUS);
  console.log(`${name}: µs per jet, engine vs reference (median of ${ROUNDS} rounds)`);
  for (let g = 0; g < groups.length; g++) {
    const group = groups[g];
    if (group.length === 0) continue;
    for (let k = 0; k < 2; k++) { timeGroup(engine, group); timeGroup(reference, group); }
    const engineUs: number[] = [];
    const referenceUs: number[] = [];
    for (let round = 0; round < ROUNDS; round++) {
      engineUs.push(timeGroup(engine, group));
      referenceUs.push(timeGroup(reference, group));
    }
    const e = median(engineUs);
    const r = median(referenceUs);
    console.log(`  towers ${GROUP_EDGES[g]}-${GROUP_EDGES[g + 1] - 1} (${group.length} jets): engine ${e.toFixed(1)}, reference ${r.toFixed(1)}, ${(r / e).toFixed(1)}x`);
  }
}
