// Two builds of the engine's groomers against each other and against the reference, in one
// process, on the events of bench/grooming.bench.ts (toy pileup-200 events with 2 invented
// boosted objects each, fictional Halden ring; invented data; anti-kt R = 1.0 jets above ptMin).
// Every event is groomed by the reference and A, then by the reference and B (B first in every
// other round), each call timed on its own: each engine call comes right after a reference call, as
// in grooming.bench.ts, where that costs the engine about a third more than a call after another
// engine call would (the reference's allocations push the engine's memory out of the caches), so
// a fixed order of A and B would favour the second. A figure is the mean over events of each
// event's median over rounds, as in grooming.bench.ts. The machine's speed wanders by up to 1.6x
// over a minute, so only figures of one run compare.
//
//   node dist/bench/grooming-pair.bench.js A.wasm B.wasm [--ptmin 200] [--rounds 20]
//
// A and B are .wasm files built from assembly/ (for instance a copy of build/jetlag.wasm kept
// from before a change).

import { readFileSync } from 'node:fs';
import { WasmClusterer } from '../host/clustering/engine.js';
import type { JetGroomer } from '../host/clustering/grooming/groomer.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { generateEvents } from '../host/generator/generate.js';
import { DEFAULT_GRID, type ClusterSettings, type GroomingSettings } from '../host/types.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(name);
  if (at < 0) return fallback;
  const value = Number(process.argv[at + 1]);
  if (!Number.isFinite(value)) throw new Error(`grooming-pair: ${name} needs a number, got ${process.argv[at + 1]}`);
  return value;
}

const files = process.argv.slice(2).filter((arg, k, all) => !arg.startsWith('--') && !(k > 0 && all[k - 1].startsWith('--')));
if (files.length !== 2) {
  console.error('usage: node dist/bench/grooming-pair.bench.js A.wasm B.wasm [--ptmin 200] [--rounds 20]');
  process.exit(2);
}
const ptMin = option('--ptmin', 200);
const rounds = option('--rounds', 20);
const RADIUS = 1.0;
const GROOMERS: [string, GroomingSettings][] = [
  ['trimming 0.2:0.05', { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null }],
  ['soft drop 0.1:0', { trim: null, softDrop: { zCut: 0.1, beta: 0 } }],
];

const events = [...generateEvents(DEFAULT_GRID, { events: 24, pileup: 200, seed: 16, boosted: 2 })];
const settings: ClusterSettings = { p: -1, radius: RADIUS, ptMin, threshold: 0, recombination: 'e' };
const clusterer = new WasmClusterer(DEFAULT_GRID, settings);
clusterer.withTowers = true;
const clustered = events.map((e) => clusterer.cluster(e.towerIndex, e.towerEt));
const modules = files.map((file) => new WebAssembly.Module(readFileSync(file)));

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const n = sorted.length;
  return n % 2 === 1 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}

console.log(`groomers alone, A = ${files[0]}, B = ${files[1]}, reference; ptMin ${ptMin} GeV, ${rounds} rounds of 24 events`);
for (const [name, grooming] of GROOMERS) {
  const groomers: JetGroomer[] = [
    new EngineGroomer(DEFAULT_GRID, grooming, RADIUS, { module: modules[0] }),
    new EngineGroomer(DEFAULT_GRID, grooming, RADIUS, { module: modules[1] }),
    new ReferenceGroomer(DEFAULT_GRID, grooming, RADIUS),
  ];
  const times = groomers.map(() => events.map((): number[] => []));
  const timeCall = (g: number, k: number, round: number): void => {
    const began = performance.now();
    groomers[g].groom(clustered[k], events[k].towerIndex, events[k].towerEt);
    const us = (performance.now() - began) * 1000;
    if (round >= 0) times[g][k].push(us);
  };
  // three rounds of warm-up, so the JIT has compiled the hot code of each before timing
  for (let round = -3; round < rounds; round++) {
    for (let k = 0; k < events.length; k++) {
      for (let n = 0; n < 2; n++) {
        timeCall(2, k, round);
        timeCall((n + round + 3) % 2, k, round);
      }
    }
  }
  const [a, b, reference] = times.map((perEvent) => perEvent.reduce((sum, t) => sum + median(t), 0) / perEvent.length);
  console.log(`  ${name}: A ${a.toFixed(1)} µs, B ${b.toFixed(1)} µs, reference ${reference.toFixed(0)} µs per event; ` +
    `B/A ${(b / a).toFixed(2)}, reference/A ${(reference / a).toFixed(1)}x, reference/B ${(reference / b).toFixed(1)}x`);
}
