// The engine against a plain native build of the same published method (bench/native-yardstick/
// nearest-neighbour-blocks.c: blocks a little wider than R, exact neighbours, a priority queue of
// candidates; gcc -O3 -march=native), on the same invented events (tests/support/random-events.ts),
// batch for batch in turn. The machine's speed wanders by up to 1.6x over a minute, so the figure
// that counts is the median of the paired ratios engine/native; absolute medians are printed
// beside it.
//
//   npm run bench:native     (builds first; needs gcc)
//   node dist/bench/native-pair.bench.js [--rounds 100] [--events 24]
//
// Before timing, the native build's jets are checked against the engine's on the anti-kt
// events: the same jets with the same tower counts, pt equal to 1e-12 (its log and atan2 are the
// C library's, not V8's, so the last bits may differ). Writes bench/results/native-pair.json.

import { execFileSync, spawn } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { DEFAULT_GRID } from '../host/types.js';
import { batchOf, makeRandom, pileupEvents } from '../tests/support/random-events.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(name);
  if (at < 0) return fallback;
  const value = Number(process.argv[at + 1]);
  if (!Number.isInteger(value) || value < 1) throw new Error(`native-pair: ${name} needs a positive integer, got ${process.argv[at + 1]}`);
  return value;
}

const rounds = option('--rounds', 100);
const eventsPerBatch = option('--events', 24);
const WARM_ROUNDS = 4;
const CONFIGS = [
  { name: 'anti-kt', p: -1, towers: 850 },
  { name: 'C/A', p: 0, towers: 850 },
  { name: 'kt', p: 1, towers: 850 },
  { name: 'anti-kt', p: -1, towers: 3200 },
];

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..', '..');
const workDir = join(root, 'build', 'native-yardstick');
mkdirSync(workDir, { recursive: true });
const binary = join(workDir, 'nearest-neighbour-blocks');
try {
  execFileSync('gcc', ['-O3', '-march=native', '-o', binary, join(root, 'bench', 'native-yardstick', 'nearest-neighbour-blocks.c'), '-lm'], { stdio: 'inherit' });
} catch (error) {
  console.error(`native-pair: could not build the native baseline with gcc (${(error as Error).message})`);
  process.exit(1);
}

interface EventBatch {
  count: number;
  towerStart: Int32Array;
  towerIndex: Int32Array;
  towerEt: Float64Array;
}

/** Invented pileup-like events (1-4 hard jets), written in the baseline's input format. */
function makeEvents(towers: number, count: number): { batch: EventBatch; file: string } {
  const random = makeRandom(4242 + towers);
  const { towerStart, towerIndex, towerEt } = batchOf(pileupEvents(DEFAULT_GRID, towers, count, random));
  // u32 eventCount, then per event u32 n, i32 flatIndex[n], f64 et[n], little endian
  const bytes = Buffer.alloc(4 + 4 * count + 12 * towerStart[count]);
  let at = bytes.writeUInt32LE(count, 0);
  for (let e = 0; e < count; e++) {
    const from = towerStart[e];
    const n = towerStart[e + 1] - from;
    at = bytes.writeUInt32LE(n, at);
    for (let k = 0; k < n; k++) at = bytes.writeInt32LE(towerIndex[from + k], at);
    for (let k = 0; k < n; k++) at = bytes.writeDoubleLE(towerEt[from + k], at);
  }
  const file = join(workDir, `events-${towers}.bin`);
  writeFileSync(file, bytes);
  return { batch: { count, towerStart, towerIndex, towerEt }, file };
}

function engineFor(p: number): WasmClusterer {
  return new WasmClusterer(DEFAULT_GRID, { p, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' });
}

/** The first event where the baseline's jets are not the engine's (to 1e-12 in pt), or null. */
function checkBaseline(file: string, batch: EventBatch, p: number): string | null {
  const text = execFileSync(binary, ['check', file, String(p)], { encoding: 'utf8', maxBuffer: 1 << 28 });
  const native: number[][][] = Array.from({ length: batch.count }, () => []);
  for (const line of text.split('\n')) {
    if (line === '') continue;
    const [event, pt, , , towerCount] = line.split(' ').map(Number);
    native[event].push([pt, towerCount]);
  }
  const jets = engineFor(p).clusterBatch(batch.count, batch.towerStart, batch.towerIndex, batch.towerEt, false);
  for (let e = 0; e < batch.count; e++) {
    const first = jets.jetStart[e];
    const count = jets.jetStart[e + 1] - first;
    if (count !== native[e].length) return `event ${e}: ${native[e].length} native jets, ${count} engine jets`;
    for (let k = 0; k < count; k++) {
      const [pt, towerCount] = native[e][k];
      if (towerCount !== jets.towerCount[first + k] || Math.abs(pt / jets.pt[first + k] - 1) > 1e-12) {
        return `event ${e}, jet ${k}: native pt ${pt} (${towerCount} towers), engine pt ${jets.pt[first + k]} (${jets.towerCount[first + k]} towers)`;
      }
    }
  }
  return null;
}

function quantile(values: number[], q: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  const x = q * (sorted.length - 1);
  const low = Math.floor(x);
  const high = Math.ceil(x);
  return sorted[low] + (sorted[high] - sorted[low]) * (x - low);
}

interface Row {
  algorithm: string;
  towers: number;
  nativeMedianUs: number;
  engineMedianUs: number;
  ratioMedian: number;
  ratioQ25: number;
  ratioQ75: number;
}

/** One configuration's two sides and the times taken so far. */
interface Pairing {
  row: Pick<Row, 'algorithm' | 'towers'>;
  perBatch: number;
  batches: number;
  nativeBatch: (first: number) => Promise<number>;
  engineBatch: (first: number) => number;
  quit: () => void;
  nativeNs: number[];
  engineNs: number[];
  ratios: number[];
}

function startPairing(name: string, p: number, towers: number, events: { batch: EventBatch; file: string }, perBatch: number): Pairing {
  const engine = engineFor(p);
  const server = spawn(binary, ['serve', events.file, String(p)], { stdio: ['pipe', 'pipe', 'inherit'] });
  const replies = createInterface({ input: server.stdout })[Symbol.asyncIterator]();
  return {
    row: { algorithm: name, towers },
    perBatch,
    batches: Math.floor(events.batch.count / perBatch),
    // each side's own clock around its events, from loaded towers to sorted jets
    nativeBatch: async (first) => {
      server.stdin.write(`run ${first} ${perBatch} 1\n`);
      const reply = await replies.next();
      const ns = Number(reply.value);
      if (reply.done || !Number.isFinite(ns)) throw new Error(`native-pair: the native server answered ${reply.done ? 'nothing' : reply.value}`);
      return ns;
    },
    engineBatch: (first) => {
      const jets = engine.clusterBatch(perBatch, events.batch.towerStart.subarray(first, first + perBatch + 1), events.batch.towerIndex, events.batch.towerEt, false);
      let sum = 0;
      for (let e = 0; e < perBatch; e++) sum += jets.clusterNs[e];
      return sum / perBatch;
    },
    quit: () => server.stdin.end('quit\n'),
    nativeNs: [],
    engineNs: [],
    ratios: [],
  };
}

/** One round: a batch on each side, the order alternating from round to round. */
async function pairedRound(pairing: Pairing, round: number): Promise<void> {
  const first = (round % pairing.batches) * pairing.perBatch;
  let native: number;
  let wasm: number;
  if (round % 2 === 0) {
    native = await pairing.nativeBatch(first);
    wasm = pairing.engineBatch(first);
  } else {
    wasm = pairing.engineBatch(first);
    native = await pairing.nativeBatch(first);
  }
  if (round < WARM_ROUNDS) return;
  pairing.nativeNs.push(native);
  pairing.engineNs.push(wasm);
  pairing.ratios.push(wasm / native);
}

function summary(pairing: Pairing): Row {
  return {
    ...pairing.row,
    nativeMedianUs: quantile(pairing.nativeNs, 0.5) / 1e3,
    engineMedianUs: quantile(pairing.engineNs, 0.5) / 1e3,
    ratioMedian: quantile(pairing.ratios, 0.5),
    ratioQ25: quantile(pairing.ratios, 0.25),
    ratioQ75: quantile(pairing.ratios, 0.75),
  };
}

const eventSets = new Map<number, { batch: EventBatch; file: string }>();
for (const config of CONFIGS) {
  if (!eventSets.has(config.towers)) eventSets.set(config.towers, makeEvents(config.towers, config.towers > 1000 ? 48 : 96));
}
const mismatch = checkBaseline(eventSets.get(850)!.file, eventSets.get(850)!.batch, -1);
if (mismatch) {
  console.error(`native-pair: the native baseline disagrees with the engine on anti-kt: ${mismatch}`);
  process.exit(1);
}
console.log('native baseline: anti-kt jets of the 850-tower events agree with the engine (counts, towers, pt to 1e-12)');

// the configurations take their rounds in turn, so that each sees the same phases of the machine
const pairings = CONFIGS.map((config) => startPairing(config.name, config.p, config.towers, eventSets.get(config.towers)!,
  config.towers > 1000 ? Math.max(1, eventsPerBatch >> 2) : eventsPerBatch));
for (let round = 0; round < WARM_ROUNDS + rounds; round++) {
  for (const pairing of pairings) await pairedRound(pairing, round);
}
for (const pairing of pairings) pairing.quit();
const rows = pairings.map(summary);
console.log(`\n${rounds} paired rounds each (+${WARM_ROUNDS} warm-up), the configurations in turn, R = 0.4, default grid; times are medians in µs per event`);
console.log('| algorithm | towers | native | engine | engine / native (median) | q25 | q75 |');
console.log('|---|---|---|---|---|---|---|');
for (const row of rows) {
  console.log(`| ${row.algorithm} | ${row.towers} | ${row.nativeMedianUs.toFixed(0)} | ${row.engineMedianUs.toFixed(0)} | ${row.ratioMedian.toFixed(3)} | ${row.ratioQ25.toFixed(3)} | ${row.ratioQ75.toFixed(3)} |`);
}
const resultsDir = join(root, 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'native-pair.json'), JSON.stringify({ rounds, eventsPerBatch, rows }, null, 2) + '\n');
console.log(`written ${join(resultsDir, 'native-pair.json')}`);
