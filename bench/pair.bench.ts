// Two builds of the engine against each other, in one process: batches of the same invented
// events (tests/support/random-events.ts) go to each in turn, and the figure that counts is the
// median of the paired ratios B/A. The machine's speed wanders by up to 1.6x over a minute
// (other work on the host), so times taken at different moments are not comparable; a batch of
// A and the batch of B right after it see the same moment.
//
//   node dist/bench/pair.bench.js A.wasm B.wasm [--p -1] [--towers 850] [--events 24] [--rounds 30]
//
// A and B are .wasm files built from assembly/ (for instance a copy of build/jetlag.wasm kept
// from before a change). Both must export the interface host/engine.ts expects.

import { readFileSync } from 'node:fs';
import { WasmClusterer } from '../host/clustering/engine.js';
import { DEFAULT_GRID, type ClusterSettings } from '../host/types.js';
import { batchOf, makeRandom, pileupEvents } from '../tests/support/random-events.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(name);
  if (at < 0) return fallback;
  const value = Number(process.argv[at + 1]);
  if (!Number.isFinite(value)) throw new Error(`pair: ${name} needs a number, got ${process.argv[at + 1]}`);
  return value;
}

const files = process.argv.slice(2).filter((arg, k, all) => !arg.startsWith('--') && !(k > 0 && all[k - 1].startsWith('--')));
if (files.length !== 2) {
  console.error('usage: node dist/bench/pair.bench.js A.wasm B.wasm [--p -1] [--towers 850] [--events 24] [--rounds 30]');
  process.exit(2);
}
const p = option('--p', -1);
const towers = option('--towers', 850);
const events = option('--events', 24);
const rounds = option('--rounds', 30);

const random = makeRandom(12345 + towers);
const { towerStart: starts, towerIndex: index, towerEt: et } = batchOf(pileupEvents(DEFAULT_GRID, towers, events, random));

const settings: ClusterSettings = { p, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
const engines = files.map((file) => new WasmClusterer(DEFAULT_GRID, settings, { module: new WebAssembly.Module(readFileSync(file)) }));
const times: number[][] = [[], []];
for (let warm = 0; warm < 5; warm++) for (const engine of engines) engine.clusterBatch(events, starts, index, et, false);
for (let round = 0; round < rounds; round++) {
  for (let k = 0; k < 2; k++) {
    // A first in even rounds, B first in odd ones
    const which = round % 2 === 0 ? k : 1 - k;
    const began = process.hrtime.bigint();
    engines[which].clusterBatch(events, starts, index, et, false);
    times[which].push(Number(process.hrtime.bigint() - began) / 1e3 / events);
  }
}
const median = (values: number[]) => [...values].sort((a, b) => a - b)[values.length >> 1];
const ratios = times[0].map((a, round) => times[1][round] / a);
console.log(`p = ${p}, ${towers} towers, ${events} events x ${rounds} rounds: A median ${median(times[0]).toFixed(1)} us/event, ` +
  `B median ${median(times[1]).toFixed(1)} us/event, B/A paired median ${median(ratios).toFixed(3)}`);
