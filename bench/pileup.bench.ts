// What the engine's pileup chain costs against plain clustering (clustering-spec.md sections
// 8-10), anti-kt R = 0.4 on the default grid. Configurations take their turns batch by batch on
// the same events, and each figure is the median over rounds of a paired ratio, since this
// machine's speed wanders too much for unpaired times to decide 5-10 %. Also the chain's own
// stage times. Events are invented (tests/support/random-events.ts: ~850-tower pileup-like
// events over 1-4 hard jets, and full grids of real towers). Last, the engine against the
// reference on the whole chain (areas, ρ from patches, subtraction) on the toy generator's
// pileup-200 events, paired event by event.
//
//   npm run bench:pileup   (or: node dist/bench/pileup.bench.js [--rounds 30] [--reference-events 6])

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { EnginePileupClusterer, STAGE_COUNT, STAGE_NAMES } from '../host/clustering/pileup/engine-chain.js';
import { PileupReferenceClusterer } from '../host/clustering/pileup/chain.js';
import { generateEvents } from '../host/generator/generate.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Clusterer, type PileupSettings } from '../host/types.js';
import { fullGridEvent, makeRandom, pileupEvents, type TowerArrays } from '../tests/support/random-events.js';

const roundsAt = process.argv.indexOf('--rounds');
const ROUNDS = roundsAt >= 0 ? Number(process.argv[roundsAt + 1]) : 30;
const referenceEventsAt = process.argv.indexOf('--reference-events');
const REFERENCE_EVENTS = referenceEventsAt >= 0 ? Number(process.argv[referenceEventsAt + 1]) : 6;
const BATCH = 24;
const settings: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
const off = DEFAULT_PILEUP_SETTINGS;

const pileup = pileupEvents(DEFAULT_GRID, 850, BATCH, makeRandom(1));
const random = makeRandom(2);
const fullGrids = Array.from({ length: BATCH }, () => fullGridEvent(DEFAULT_GRID, random));

interface Configuration {
  name: string;
  clusterer: Clusterer;
  events: TowerArrays[];
}

function chain(pileupSettings: PileupSettings): EnginePileupClusterer {
  return new EnginePileupClusterer(DEFAULT_GRID, settings, pileupSettings, 'bench');
}

const plain = new WasmClusterer(DEFAULT_GRID, settings);
const chains = {
  areasRhoSubtract: chain({ ...off, areas: true, subtract: true }),
  areas: chain({ ...off, areas: true }),
  rhoPatches: chain({ ...off, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } } }),
  rhoKt: chain({ ...off, rho: { kind: 'kt', radius: 0.4 } }),
  softKiller: chain({ ...off, softKiller: { etaRows: 5, phiColumns: 5 } }),
};
const configurations: Configuration[] = [
  { name: 'plain, pileup events', clusterer: plain, events: pileup },
  { name: 'plain, full grids of real towers', clusterer: plain, events: fullGrids },
  { name: 'areas + patches rho + subtraction', clusterer: chains.areasRhoSubtract, events: pileup },
  { name: 'areas', clusterer: chains.areas, events: pileup },
  { name: 'patches rho', clusterer: chains.rhoPatches, events: pileup },
  { name: 'kt rho', clusterer: chains.rhoKt, events: pileup },
  { name: 'SoftKiller', clusterer: chains.softKiller, events: pileup },
];

/** µs per event over one batch; stage times summed into `stages` when the clusterer is a chain */
function timeBatch(configuration: Configuration, stages: Float64Array | null): number {
  const began = performance.now();
  for (const event of configuration.events) {
    configuration.clusterer.cluster(event.towerIndex, event.towerEt);
    if (stages) {
      const stageNs = (configuration.clusterer as EnginePileupClusterer).stageNs;
      for (let s = 0; s < STAGE_COUNT; s++) stages[s] += stageNs[s];
    }
  }
  return ((performance.now() - began) * 1000) / configuration.events.length;
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const n = sorted.length;
  return n % 2 === 1 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}

// warm-up, then rounds in which every configuration times the same batch in turn
for (const configuration of configurations) timeBatch(configuration, null);
const times = configurations.map(() => [] as number[]);
const stageRounds = configurations.map(() => [] as Float64Array[]);
for (let round = 0; round < ROUNDS; round++) {
  configurations.forEach((configuration, c) => {
    const stages = configuration.clusterer instanceof EnginePileupClusterer ? new Float64Array(STAGE_COUNT) : null;
    times[c].push(timeBatch(configuration, stages));
    if (stages) stageRounds[c].push(stages.map((ns) => ns / 1000 / configuration.events.length));
  });
}

const pairedRatio = (a: number, b: number) => median(times[a].map((t, round) => t / times[b][round]));
const ratios = {
  'areas + patches rho + subtraction / plain full grid (target <= 1.1)': pairedRatio(2, 1),
  'areas / plain pileup events': pairedRatio(3, 0),
  'patches rho / plain pileup events': pairedRatio(4, 0),
  'kt rho / plain pileup events': pairedRatio(5, 0),
  'SoftKiller chain / plain pileup events': pairedRatio(6, 0),
};
const softKillerStage = median(stageRounds[6].map((stages, round) => stages[0] / times[0][round]));

console.log(`engine pileup chain, default grid, anti-kt R = 0.4, ${ROUNDS} rounds of ${BATCH} events (invented events)`);
console.table(configurations.map((configuration, c) => {
  const row: Record<string, string> = { configuration: configuration.name, 'median µs/event': median(times[c]).toFixed(1) };
  if (stageRounds[c].length > 0) {
    for (let s = 0; s < STAGE_COUNT; s++) row[STAGE_NAMES[s]] = median(stageRounds[c].map((stages) => stages[s])).toFixed(1);
  }
  return row;
}));
console.table(Object.entries(ratios).map(([ratio, value]) => ({ 'paired ratio (median over rounds)': ratio, value: value.toFixed(3) })));
console.log(`SoftKiller stage / plain clustering of the same events (target <= 0.05): ${softKillerStage.toFixed(4)}`);

// the engine against the reference on the whole chain: each event timed on both, one after the
// other, so that each ratio is paired; the reference takes about a second an event
const wholeChain: PileupSettings = { ...off, areas: true, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } }, subtract: true };
const engineChain = chain(wholeChain);
const referenceChain = new PileupReferenceClusterer(DEFAULT_GRID, settings, wholeChain, 'bench');
const generated = [...generateEvents(DEFAULT_GRID, { events: REFERENCE_EVENTS, pileup: 200, seed: 200 })];
const timeOne = (clusterer: Clusterer, towerIndex: Int32Array, towerEt: Float64Array, repeat: number) => {
  const began = performance.now();
  for (let k = 0; k < repeat; k++) clusterer.cluster(towerIndex, towerEt);
  return ((performance.now() - began) * 1000) / repeat;
};
const engineOverReference: number[] = [];
const referenceUs: number[] = [];
const engineUs: number[] = [];
referenceChain.cluster(generated[0].towerIndex, generated[0].towerEt);
for (const event of generated) {
  const engineTime = timeOne(engineChain, event.towerIndex, event.towerEt, 20);
  const referenceTime = timeOne(referenceChain, event.towerIndex, event.towerEt, 1);
  engineUs.push(engineTime);
  referenceUs.push(referenceTime);
  engineOverReference.push(referenceTime / engineTime);
}
const referenceRatio = median(engineOverReference);
console.log(`whole chain (areas, ρ patches 5:5, subtraction) on ${REFERENCE_EVENTS} toy-generator pileup-200 events: ` +
  `reference ${median(referenceUs).toFixed(0)} µs, engine ${median(engineUs).toFixed(0)} µs per event (medians); ` +
  `reference / engine ${referenceRatio.toFixed(0)}x (median of per-event ratios; target >= 100)`);

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'pileup.json'), JSON.stringify({
  rounds: ROUNDS,
  batch: BATCH,
  medianUsPerEvent: Object.fromEntries(configurations.map((configuration, c) => [configuration.name, median(times[c])])),
  ratios,
  softKillerStageRatio: softKillerStage,
  wholeChainReferenceOverEngine: referenceRatio,
}, null, 2));
console.log(`written ${join(resultsDir, 'pileup.json')}`);
