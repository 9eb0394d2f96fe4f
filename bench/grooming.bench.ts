// What grooming (clustering-spec.md section 12) costs on top of large-R clustering in the engine,
// and how much faster the engine's groomer is than the reference's. Events: the toy generator's
// pileup-200 events with 2 invented boosted objects each (`generate --boosted 2`: two- and
// three-prong decays of made-up heavy particles, fictional Halden ring; invented data).
//
// 1. Engine, anti-kt R = 1.0, with towers reported (grooming needs them), alone vs + trimming
//    0.2:0.05 vs + soft drop 0.1:0 (the common settings), for ptMin = 200 GeV (boosted triggers
//    cut high; common practice) and ptMin = 0 (every jet groomed).
// 2. The groomer alone: engine vs reference grooming the same clustered jets.
// Every call (one event) is timed on its own, the configurations back to back on the same
// event, each round over every event; each configuration's figure is the sum over events of the
// event's median over rounds, and a ratio is the ratio of two such sums. Why per event: on this
// shared machine a process is often set aside for milliseconds, which lands in a batch's time
// (tens of milliseconds) far more often than in one event's; the median per event drops it.
//
//   npm run bench:grooming   (or: node dist/bench/grooming.bench.js [--rounds 30])

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { GroomingClusterer, type JetGroomer } from '../host/clustering/grooming/groomer.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { generateEvents } from '../host/generator/generate.js';
import { DEFAULT_GRID, type ClusterSettings, type Clusterer, type GroomingSettings, type JetSet } from '../host/types.js';

const roundsAt = process.argv.indexOf('--rounds');
const ROUNDS = roundsAt >= 0 ? Number(process.argv[roundsAt + 1]) : 30;
const BATCH = 24;
const RADIUS = 1.0;
const PT_MINS = [200, 0];
const TRIM: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null };
const SOFT_DROP: GroomingSettings = { trim: null, softDrop: { zCut: 0.1, beta: 0 } };

const events = [...generateEvents(DEFAULT_GRID, { events: BATCH, pileup: 200, seed: 16, boosted: 2 })].map((e) => ({ towerIndex: e.towerIndex, towerEt: e.towerEt }));
const meanTowers = events.reduce((sum, e) => sum + e.towerIndex.length, 0) / events.length;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const n = sorted.length;
  return n % 2 === 1 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}

/** µs of one clusterer on event k */
function timeClusterer(clusterer: Clusterer, k: number): number {
  const began = performance.now();
  clusterer.cluster(events[k].towerIndex, events[k].towerEt);
  return (performance.now() - began) * 1000;
}

/** µs of one groomer on event k's clustered jets */
function timeGroomer(groomer: JetGroomer, jets: JetSet[], k: number): number {
  const began = performance.now();
  groomer.groom(jets[k], events[k].towerIndex, events[k].towerEt);
  return (performance.now() - began) * 1000;
}

/** per event, its times over the rounds */
function perEvent(): number[][] {
  return events.map(() => []);
}

/** µs per event: the mean over events of each event's median */
function meanOfMedians(times: number[][]): number {
  return times.reduce((sum, t) => sum + median(t), 0) / times.length;
}

interface PtMinResult {
  ptMin: number;
  jetsPerEvent: number;
  plainUs: number;
  trimUs: number;
  softDropUs: number;
  trimOverPlain: number;
  softDropOverPlain: number;
  engineGroomerUs: { trim: number; softDrop: number };
  referenceGroomerUs: { trim: number; softDrop: number };
  referenceOverEngine: { trim: number; softDrop: number };
}

function measure(ptMin: number): PtMinResult {
  const settings: ClusterSettings = { p: -1, radius: RADIUS, ptMin, threshold: 0, recombination: 'e' };
  const plain = new WasmClusterer(DEFAULT_GRID, settings);
  plain.withTowers = true;
  const trim = new GroomingClusterer(new WasmClusterer(DEFAULT_GRID, settings), new EngineGroomer(DEFAULT_GRID, TRIM, RADIUS));
  const softDrop = new GroomingClusterer(new WasmClusterer(DEFAULT_GRID, settings), new EngineGroomer(DEFAULT_GRID, SOFT_DROP, RADIUS));
  // warm-up, so the JIT has compiled the hot code of each before timing
  for (let round = 0; round < 3; round++) for (let k = 0; k < events.length; k++) for (const c of [plain, trim, softDrop]) timeClusterer(c, k);
  const times = { plain: perEvent(), trim: perEvent(), softDrop: perEvent() };
  for (let round = 0; round < ROUNDS; round++) {
    for (let k = 0; k < events.length; k++) {
      times.plain[k].push(timeClusterer(plain, k));
      times.trim[k].push(timeClusterer(trim, k));
      times.softDrop[k].push(timeClusterer(softDrop, k));
    }
  }

  // the groomer alone, on the same clustered jets (grooming sets their rows, the same each time)
  const clustered = events.map((e) => { const j = new WasmClusterer(DEFAULT_GRID, settings); j.withTowers = true; return j.cluster(e.towerIndex, e.towerEt); });
  const jetsPerEvent = clustered.reduce((sum, j) => sum + j.count, 0) / clustered.length;
  const groomers = {
    trim: { engine: new EngineGroomer(DEFAULT_GRID, TRIM, RADIUS), reference: new ReferenceGroomer(DEFAULT_GRID, TRIM, RADIUS) },
    softDrop: { engine: new EngineGroomer(DEFAULT_GRID, SOFT_DROP, RADIUS), reference: new ReferenceGroomer(DEFAULT_GRID, SOFT_DROP, RADIUS) },
  };
  const engineUs = { trim: perEvent(), softDrop: perEvent() };
  const referenceUs = { trim: perEvent(), softDrop: perEvent() };
  for (const name of ['trim', 'softDrop'] as const) {
    for (let round = 0; round < 3; round++) for (let k = 0; k < events.length; k++) { timeGroomer(groomers[name].engine, clustered, k); timeGroomer(groomers[name].reference, clustered, k); }
    for (let round = 0; round < ROUNDS; round++) {
      for (let k = 0; k < events.length; k++) {
        engineUs[name][k].push(timeGroomer(groomers[name].engine, clustered, k));
        referenceUs[name][k].push(timeGroomer(groomers[name].reference, clustered, k));
      }
    }
  }
  const plainUs = meanOfMedians(times.plain);
  const trimUs = meanOfMedians(times.trim);
  const softDropUs = meanOfMedians(times.softDrop);
  const engine = { trim: meanOfMedians(engineUs.trim), softDrop: meanOfMedians(engineUs.softDrop) };
  const reference = { trim: meanOfMedians(referenceUs.trim), softDrop: meanOfMedians(referenceUs.softDrop) };
  return {
    ptMin, jetsPerEvent, plainUs, trimUs, softDropUs,
    trimOverPlain: trimUs / plainUs, softDropOverPlain: softDropUs / plainUs,
    engineGroomerUs: engine, referenceGroomerUs: reference,
    referenceOverEngine: { trim: reference.trim / engine.trim, softDrop: reference.softDrop / engine.softDrop },
  };
}

console.log(`grooming in the engine: anti-kt R = ${RADIUS}, ${ROUNDS} rounds of ${BATCH} toy pileup-200 events with 2 invented boosted objects each (${meanTowers.toFixed(0)} towers per event)`);
const results = PT_MINS.map(measure);
for (const r of results) {
  console.log(`ptMin ${r.ptMin} GeV (${r.jetsPerEvent.toFixed(1)} jets groomed per event):`);
  console.log(`  anti-kt alone ${r.plainUs.toFixed(0)} µs, + trimming 0.2:0.05 ${r.trimUs.toFixed(0)} µs, + soft drop 0.1:0 ${r.softDropUs.toFixed(0)} µs per event (mean over events of each event's median)`);
  console.log(`  on top of the clustering (ratio of those - 1; target <= 30 % at ptMin 200): trimming ${(100 * (r.trimOverPlain - 1)).toFixed(1)} %, soft drop ${(100 * (r.softDropOverPlain - 1)).toFixed(1)} %`);
  console.log(`  the groomer alone, engine vs reference (target >= 50x): trimming ${r.engineGroomerUs.trim.toFixed(1)} vs ${r.referenceGroomerUs.trim.toFixed(0)} µs, ${r.referenceOverEngine.trim.toFixed(1)}x; ` +
    `soft drop ${r.engineGroomerUs.softDrop.toFixed(1)} vs ${r.referenceGroomerUs.softDrop.toFixed(0)} µs, ${r.referenceOverEngine.softDrop.toFixed(1)}x`);
}

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'grooming.json'), JSON.stringify({ rounds: ROUNDS, batch: BATCH, radius: RADIUS, meanTowers, results }, null, 2));
console.log(`written ${join(resultsDir, 'grooming.json')}`);
