// Engine against reference: µs per event on the default grid for N = 100, 300, 1000, 3200
// towers (plus ~850-tower pileup events, the size the native figures in the engine notes were
// taken at), anti-kt, Cambridge/Aachen and kt at R = 0.4, each timed in slices spread over the
// run. Prints a table and writes the same figures to bench/results/engine.json. Events are
// invented (tests/support/random-events.ts).
//
//   npm run bench            (builds first)
//   node dist/bench/engine.bench.js --quick

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { cpus } from 'node:os';
import { Bench } from 'tinybench';
import { WasmClusterer } from '../host/clustering/engine.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_GRID, type ClusterSettings, type Clusterer } from '../host/types.js';
import { batchOf, makeRandom, pileupEvents, type TowerArrays } from '../tests/support/random-events.js';

const quick = process.argv.includes('--quick');
const SIZES = [100, 300, 850, 1000, 3200];
const FIT_SIZES = [300, 1000, 3200];
const ALGORITHMS = [
  { name: 'anti-kt', p: -1 },
  { name: 'C/A', p: 0 },
  { name: 'kt', p: 1 },
];
const RADIUS = 0.4;
const POOL = 48;

interface Row {
  algorithm: string;
  towers: number;
  referenceMedianUs: number;
  referenceP99Us: number;
  engineMedianUs: number;
  engineP99Us: number;
  /** the engine's own per-event clock (inside the module, threshold to written jets) */
  engineInsideMedianUs: number;
  speedup: number;
}

function eventPool(towers: number, seed: number): TowerArrays[] {
  const random = makeRandom(seed);
  return pileupEvents(DEFAULT_GRID, towers, POOL, random);
}

/** µs per event of `timeMs` (at least `iterations` events) of the pool, cycling from event `from` */
async function timeSamples(clusterer: Clusterer, pool: TowerArrays[], timeMs: number, iterations: number, from: number): Promise<number[]> {
  let next = from;
  const bench = new Bench({ time: timeMs, iterations, warmupTime: Math.min(100, timeMs / 4), warmupIterations: 2, retainSamples: true });
  bench.add(clusterer.name, () => {
    const event = pool[next++ % pool.length];
    clusterer.cluster(event.towerIndex, event.towerEt);
  });
  await bench.run();
  const result = bench.tasks[0].result;
  if (result.state !== 'completed') throw new Error(`benchmark of ${clusterer.name} did not complete: ${result.state}`);
  return Array.from(result.latency.samples ?? [], (ms) => ms * 1000);
}

function quantile(sorted: number[], q: number): number {
  return sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];
}

/** the engine's own per-event clock over the pool, clustered as one batch, repeated */
function insideMedianUs(engine: WasmClusterer, pool: TowerArrays[]): number {
  const { towerStart: starts, towerIndex: index, towerEt: et } = batchOf(pool);
  const times: number[] = [];
  for (let round = 0; round < (quick ? 2 : 6); round++) {
    const batch = engine.clusterBatch(pool.length, starts, index, et, true);
    if (round > 0) times.push(...batch.clusterNs);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)] / 1000;
}

/** least-squares slope of log(time) against log(N) */
function fitExponent(points: { towers: number; us: number }[]): number {
  const xs = points.map((q) => Math.log(q.towers));
  const ys = points.map((q) => Math.log(q.us));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < xs.length; k++) {
    sxy += (xs[k] - mx) * (ys[k] - my);
    sxx += (xs[k] - mx) ** 2;
  }
  return sxy / sxx;
}

// Every configuration is timed in ROUNDS slices spread over the whole run, and its figures come
// from all its slices together: the machine's speed wanders by up to 1.6x over a minute (other
// work on the host), and a configuration timed in one stretch would carry whatever phase it met
// into the ratios and the fitted exponents.
const ROUNDS = quick ? 2 : 6;
interface Config {
  algorithm: string;
  towers: number;
  engine: WasmClusterer;
  reference: ReferenceClusterer;
  pool: TowerArrays[];
  engineUs: number[];
  referenceUs: number[];
}
const pools = new Map(SIZES.map((towers) => [towers, eventPool(towers, 17 + towers)]));
const configs: Config[] = [];
for (const algorithm of ALGORITHMS) {
  const settings: ClusterSettings = { p: algorithm.p, radius: RADIUS, ptMin: 0, threshold: 0, recombination: 'e' };
  const engine = new WasmClusterer(DEFAULT_GRID, settings);
  const reference = new ReferenceClusterer(DEFAULT_GRID, settings);
  for (const towers of SIZES) {
    configs.push({ algorithm: algorithm.name, towers, engine, reference, pool: pools.get(towers)!, engineUs: [], referenceUs: [] });
  }
}
for (let round = 0; round < ROUNDS; round++) {
  // every other round backwards, so no configuration always follows the same one
  const order = round % 2 === 0 ? configs : [...configs].reverse();
  for (const config of order) {
    const from = round * 7;
    const referenceMs = (quick ? 200 : config.towers >= 1000 ? 3000 : 1000) / ROUNDS;
    config.referenceUs.push(...await timeSamples(config.reference, config.pool, referenceMs, 2, from));
    config.engineUs.push(...await timeSamples(config.engine, config.pool, (quick ? 200 : 1500) / ROUNDS, quick ? 5 : 40, from));
  }
}

const rows: Row[] = [];
const exponents: Record<string, number> = {};
for (const config of configs) {
  const engineUs = [...config.engineUs].sort((a, b) => a - b);
  const referenceUs = [...config.referenceUs].sort((a, b) => a - b);
  const engineMedian = quantile(engineUs, 0.5);
  const referenceMedian = quantile(referenceUs, 0.5);
  rows.push({
    algorithm: config.algorithm,
    towers: config.towers,
    referenceMedianUs: referenceMedian,
    referenceP99Us: quantile(referenceUs, 0.99),
    engineMedianUs: engineMedian,
    engineP99Us: quantile(engineUs, 0.99),
    engineInsideMedianUs: insideMedianUs(config.engine, config.pool),
    speedup: referenceMedian / engineMedian,
  });
}
for (const algorithm of ALGORITHMS) {
  exponents[algorithm.name] = fitExponent(rows.filter((r) => r.algorithm === algorithm.name && FIT_SIZES.includes(r.towers))
    .map((r) => ({ towers: r.towers, us: r.engineMedianUs })));
}

const format = (us: number) => (us >= 1000 ? us.toFixed(0) : us.toPrecision(3));
console.log(`engine vs reference, default grid (50 x 64), R = ${RADIUS}, E-scheme; µs per event (median / p99)`);
console.table(rows.map((r) => ({
  algorithm: r.algorithm,
  towers: r.towers,
  'reference median': format(r.referenceMedianUs),
  'reference p99': format(r.referenceP99Us),
  'engine median': format(r.engineMedianUs),
  'engine p99': format(r.engineP99Us),
  'engine inside': format(r.engineInsideMedianUs),
  'ratio': `${r.speedup.toFixed(0)}x`,
})));
for (const [name, alpha] of Object.entries(exponents)) {
  console.log(`${name}: engine time ~ N^${alpha.toFixed(2)} (fit over N = ${FIT_SIZES.join(', ')})`);
}

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'engine.json'), JSON.stringify({
  date: new Date().toISOString(),
  node: process.version,
  cpu: cpus()[0]?.model ?? 'unknown',
  grid: DEFAULT_GRID,
  radius: RADIUS,
  quick,
  rows,
  exponents,
}, null, 2) + '\n');
console.log(`written ${join(resultsDir, 'engine.json')}`);
