// Where the time of `jetlag compare` goes, per event (node dist/bench/compare.bench.js after
// npm run build): tolerance matching plus the report's bookkeeping, against computing the
// reference jets with the reference or with the engine (`compare --engine wasm`).
// Events are invented (the toy generator, host/generate.ts, pileup 200); the candidate is the
// fixed:0.25 emulation of the same events, matched with ptMin 0 (every jet, the most work)
// and 20 GeV. The machine is shared: quote medians and ratios from one run.

import { Bench } from 'tinybench';
import { makeEmulatedClusterer } from '../host/clustering/emulate.js';
import { WasmClusterer } from '../host/clustering/engine.js';
import { generateEvents } from '../host/generator/generate.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { ValidationAccumulator } from '../host/validate/validation-accumulator.js';

const settings = { ...DEFAULT_SETTINGS, threshold: 0.5 };
const events = [...generateEvents(DEFAULT_GRID, { events: 100, pileup: 200, seed: 5 })];
const reference = new ReferenceClusterer(DEFAULT_GRID, settings);
reference.withTowers = false;
const engine = new WasmClusterer(DEFAULT_GRID, settings);
engine.withTowers = false;
const emulated = makeEmulatedClusterer(DEFAULT_GRID, settings, { lsbGeV: 0.25 });
const referenceJets = events.map((e) => reference.cluster(e.towerIndex, e.towerEt));
const candidateJets = events.map((e) => emulated.cluster(e.towerIndex, e.towerEt));
const meanJets = referenceJets.reduce((s, j) => s + j.count, 0) / referenceJets.length;
const meanTowers = events.reduce((s, e) => s + e.towerIndex.length, 0) / events.length;
console.log(`toy events: ${events.length}, mean ${meanTowers.toFixed(0)} towers, mean ${meanJets.toFixed(1)} reference jets (ptMin 0)`);

let k = 0;
let sink = 0;
const matchAll = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 0 });
const reportAll = new ValidationAccumulator({ ...DEFAULT_TOLERANCE, ptMin: 0 });
const matchHard = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 20 });
const reportHard = new ValidationAccumulator({ ...DEFAULT_TOLERANCE, ptMin: 20 });
const bench = new Bench({ name: 'compare, per event', time: 1500 });
bench
  .add('match + report, ptMin 0', () => {
    const n = k++ % events.length;
    matchAll.match(referenceJets[n], candidateJets[n]);
    reportAll.addCompared(n, matchAll, referenceJets[n], candidateJets[n], candidateJets[n].mass);
    sink += matchAll.refAboveMatched;
  })
  .add('match + report, ptMin 20 GeV', () => {
    const n = k++ % events.length;
    matchHard.match(referenceJets[n], candidateJets[n]);
    reportHard.addCompared(n, matchHard, referenceJets[n], candidateJets[n], candidateJets[n].mass);
    sink += matchHard.refAboveMatched;
  })
  .add('reference jets by the reference', () => {
    const e = events[k++ % events.length];
    sink += reference.cluster(e.towerIndex, e.towerEt).count;
  })
  .add('reference jets by the engine (--engine wasm)', () => {
    const e = events[k++ % events.length];
    sink += engine.cluster(e.towerIndex, e.towerEt).count;
  });
await bench.run();
console.table(bench.table());
const medians = bench.tasks.map((t) => (t.result && 'latency' in t.result ? t.result.latency.p50 : NaN));
const us = (ms: number) => `${(ms * 1000).toFixed(1)} µs`;
console.log(`median per event: match+report ${us(medians[0])} (ptMin 0), ${us(medians[1])} (20 GeV); ` +
  `reference ${us(medians[2])}, engine ${us(medians[3])}; reference / engine ${(medians[2] / medians[3]).toFixed(1)}x`);
if (sink < 0) console.log(sink);
