// What grooming (clustering-spec.md section 12) costs on top of large-R clustering in the engine,
// and how much faster the engine's groomer is than the reference's. Events: the toy generator's
// pileup-200 events with 2 invented boosted objects each (`generate --boosted 2`: two- and
// three-prong decays of made-up heavy particles, fictional Halden ring; invented data).
//
// 1. Engine, anti-kt R = 1.0, with towers reported (grooming needs them), alone vs + trimming
//    0.2:0.05 vs + soft drop 0.1:0 (the common settings), for ptMin = 200 GeV (boosted triggers
//    cut high; common practice) and ptMin = 0 (every jet groomed). Configurations take turns
//    batch by batch on the same events; each figure is the median over rounds of the paired
//    ratio (groomed / plain), since this machine's speed wanders too much for unpaired times.
// 2. The groomer alone: engine vs reference grooming the same clustered jets, paired per round.
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

/** µs per event of one clusterer over the batch */
function timeClusterer(clusterer: Clusterer): number {
  const began = performance.now();
  for (const event of events) clusterer.cluster(event.towerIndex, event.towerEt);
  return ((performance.now() - began) * 1000) / events.length;
}

/** µs per event of one groomer over the batch's clustered jets */
function timeGroomer(groomer: JetGroomer, jets: JetSet[]): number {
  const began = performance.now();
  for (let k = 0; k < events.length; k++) groomer.groom(jets[k], events[k].towerIndex, events[k].towerEt);
  return ((performance.now() - began) * 1000) / events.length;
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
  for (let k = 0; k < 3; k++) for (const c of [plain, trim, softDrop]) timeClusterer(c);
  const times = { plain: [] as number[], trim: [] as number[], softDrop: [] as number[] };
  const trimRatio: number[] = [];
  const softDropRatio: number[] = [];
  for (let round = 0; round < ROUNDS; round++) {
    const p = timeClusterer(plain);
    const t = timeClusterer(trim);
    const s = timeClusterer(softDrop);
    times.plain.push(p); times.trim.push(t); times.softDrop.push(s);
    trimRatio.push(t / p);
    softDropRatio.push(s / p);
  }

  // the groomer alone, on the same clustered jets (copies: grooming sets their rows)
  const clustered = events.map((e) => { const j = new WasmClusterer(DEFAULT_GRID, settings); j.withTowers = true; return j.cluster(e.towerIndex, e.towerEt); });
  const jetsPerEvent = clustered.reduce((sum, j) => sum + j.count, 0) / clustered.length;
  const groomers = {
    trim: { engine: new EngineGroomer(DEFAULT_GRID, TRIM, RADIUS), reference: new ReferenceGroomer(DEFAULT_GRID, TRIM, RADIUS) },
    softDrop: { engine: new EngineGroomer(DEFAULT_GRID, SOFT_DROP, RADIUS), reference: new ReferenceGroomer(DEFAULT_GRID, SOFT_DROP, RADIUS) },
  };
  const groomerRounds = Math.max(5, Math.floor(ROUNDS / 3));
  const engineUs = { trim: [] as number[], softDrop: [] as number[] };
  const referenceUs = { trim: [] as number[], softDrop: [] as number[] };
  const ratio = { trim: [] as number[], softDrop: [] as number[] };
  for (const name of ['trim', 'softDrop'] as const) {
    for (let k = 0; k < 3; k++) { timeGroomer(groomers[name].engine, clustered); timeGroomer(groomers[name].reference, clustered); }
    for (let round = 0; round < groomerRounds; round++) {
      const e = timeGroomer(groomers[name].engine, clustered);
      const r = timeGroomer(groomers[name].reference, clustered);
      engineUs[name].push(e); referenceUs[name].push(r); ratio[name].push(r / e);
    }
  }
  return {
    ptMin, jetsPerEvent,
    plainUs: median(times.plain), trimUs: median(times.trim), softDropUs: median(times.softDrop),
    trimOverPlain: median(trimRatio), softDropOverPlain: median(softDropRatio),
    engineGroomerUs: { trim: median(engineUs.trim), softDrop: median(engineUs.softDrop) },
    referenceGroomerUs: { trim: median(referenceUs.trim), softDrop: median(referenceUs.softDrop) },
    referenceOverEngine: { trim: median(ratio.trim), softDrop: median(ratio.softDrop) },
  };
}

console.log(`grooming in the engine: anti-kt R = ${RADIUS}, ${ROUNDS} rounds of ${BATCH} toy pileup-200 events with 2 invented boosted objects each (${meanTowers.toFixed(0)} towers per event)`);
const results = PT_MINS.map(measure);
for (const r of results) {
  console.log(`ptMin ${r.ptMin} GeV (${r.jetsPerEvent.toFixed(1)} jets groomed per event):`);
  console.log(`  anti-kt alone ${r.plainUs.toFixed(0)} µs, + trimming 0.2:0.05 ${r.trimUs.toFixed(0)} µs, + soft drop 0.1:0 ${r.softDropUs.toFixed(0)} µs per event (medians)`);
  console.log(`  on top of the clustering (median of paired ratios - 1; target <= 30 % at ptMin 200): trimming ${(100 * (r.trimOverPlain - 1)).toFixed(1)} %, soft drop ${(100 * (r.softDropOverPlain - 1)).toFixed(1)} %`);
  console.log(`  the groomer alone, engine vs reference (target >= 50x): trimming ${r.engineGroomerUs.trim.toFixed(1)} vs ${r.referenceGroomerUs.trim.toFixed(0)} µs, ${r.referenceOverEngine.trim.toFixed(1)}x; ` +
    `soft drop ${r.engineGroomerUs.softDrop.toFixed(1)} vs ${r.referenceGroomerUs.softDrop.toFixed(0)} µs, ${r.referenceOverEngine.softDrop.toFixed(1)}x`);
}

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'grooming.json'), JSON.stringify({ rounds: ROUNDS, batch: BATCH, radius: RADIUS, meanTowers, results }, null, 2));
console.log(`written ${join(resultsDir, 'grooming.json')}`);
