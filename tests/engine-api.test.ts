// The engine's host API: batches, per-event status and timing, limits, memory, builds.

import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { batchEventJets } from '../host/clustering/engine-batch.js';
import { loadEngineModule, ENGINE_OK, ENGINE_INDEX_OUTSIDE, ENGINE_INDEX_REPEATED } from '../host/clustering/engine-module.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type ClusterSettings } from '../host/types.js';
import { firstJetDifference } from './support/jet-equality.js';
import { batchOf, fullGridEvent, makeRandom, randomEvent, type TowerArrays } from './support/random-events.js';

function flatten(events: TowerArrays[]): { starts: Int32Array; index: Int32Array; et: Float64Array } {
  const batch = batchOf(events);
  return { starts: batch.towerStart, index: batch.towerIndex, et: batch.towerEt };
}

const settings: ClusterSettings = { ...DEFAULT_SETTINGS, ptMin: 1 };

describe('clusterBatch', () => {
  const random = makeRandom(11);
  const events = Array.from({ length: 40 }, (_, k) => randomEvent(DEFAULT_GRID, { towers: [0, 1, 50, 400, 900][k % 5], hardJets: 2, dead: 0.1 }, random));
  const { starts, index, et } = flatten(events);

  it('gives each event the jets that cluster() gives it, bit for bit', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, settings);
    const batch = engine.clusterBatch(events.length, starts, index, et, true);
    const failures: string[] = [];
    events.forEach((event, e) => {
      const difference = firstJetDifference(batchEventJets(batch, e), engine.cluster(event.towerIndex, event.towerEt));
      if (difference) failures.push(`event ${e}: ${difference}`);
    });
    expect(failures).toEqual([]);
  });

  it('without towers gives the same jets and tower counts, and no tower lists', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, settings);
    const withTowers = engine.clusterBatch(events.length, starts, index, et, true);
    const without = engine.clusterBatch(events.length, starts, index, et, false);
    expect(without.towers.length).toBe(0);
    expect(Array.from(without.pt)).toEqual(Array.from(withTowers.pt));
    expect(Array.from(without.towerCount)).toEqual(Array.from(withTowers.towerCount));
    expect(Array.from(without.jetStart)).toEqual(Array.from(withTowers.jetStart));
  });

  it('reports per event the towers that entered clustering and a positive clustering time', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, settings);
    const batch = engine.clusterBatch(events.length, starts, index, et, true);
    events.forEach((event, e) => {
      const above = event.towerEt.filter((value) => value > settings.threshold && value >= 1e-150).length;
      expect(batch.clustered[e]).toBe(above);
      expect(batch.status[e]).toBe(ENGINE_OK);
      expect(batch.clusterNs[e]).toBeGreaterThan(0);
      expect(Number.isFinite(batch.clusterNs[e])).toBe(true);
    });
  });

  it('cuts a batch bigger than one call into calls without changing any jet', () => {
    const grid = DEFAULT_GRID;
    const big = Array.from({ length: 22 }, (_, k) => fullGridEvent(grid, makeRandom(100 + k)));
    const flat = flatten(big);
    const engine = new WasmClusterer(grid, settings);
    expect(flat.index.length).toBeGreaterThan(engine.towerCapacity);
    const batch = engine.clusterBatch(big.length, flat.starts, flat.index, flat.et, true);
    const failures: string[] = [];
    big.forEach((event, e) => {
      const difference = firstJetDifference(batchEventJets(batch, e), engine.cluster(event.towerIndex, event.towerEt));
      if (difference) failures.push(`event ${e}: ${difference}`);
    });
    expect(failures).toEqual([]);
  }, 60_000);

  it('marks an event with an index outside the grid or a repeated index, gives it no jets, and keeps its neighbours', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, settings);
    const good = randomEvent(DEFAULT_GRID, { towers: 200, hardJets: 2 }, makeRandom(3));
    const outside = { towerIndex: Int32Array.of(5, 3200), towerEt: Float64Array.of(4, 4) };
    const repeated = { towerIndex: Int32Array.of(7, 9, 7), towerEt: Float64Array.of(4, 4, 4) };
    const flat = flatten([good, outside, good, repeated, good]);
    const batch = engine.clusterBatch(5, flat.starts, flat.index, flat.et, true);
    expect(Array.from(batch.status)).toEqual([ENGINE_OK, ENGINE_INDEX_OUTSIDE, ENGINE_OK, ENGINE_INDEX_REPEATED, ENGINE_OK]);
    expect(batch.jetStart[2] - batch.jetStart[1]).toBe(0);
    expect(batch.jetStart[4] - batch.jetStart[3]).toBe(0);
    const alone = engine.cluster(good.towerIndex, good.towerEt);
    for (const e of [0, 2, 4]) expect(firstJetDifference(batchEventJets(batch, e), alone)).toBeNull();
  });
});

describe('cluster', () => {
  it('throws a one-line error naming the problem for an index outside the grid', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, settings);
    expect(() => engine.cluster(Int32Array.of(-1), Float64Array.of(1))).toThrow(/outside the grid/);
  });

  it('gives no jets for an empty event and one jet for a single tower', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, DEFAULT_SETTINGS);
    expect(engine.cluster(new Int32Array(0), new Float64Array(0)).count).toBe(0);
    const one = engine.cluster(Int32Array.of(1234), Float64Array.of(42));
    expect(one.count).toBe(1);
    expect(Array.from(one.towers)).toEqual([1234]);
    expect(one.pt[0]).toBe(42);
  });

  it('matches the reference for towers near the extremes of et, where weights leave the safe range', () => {
    const failures: string[] = [];
    const random = makeRandom(8);
    for (const p of [-1, 1, 0.5, -0.5, 2]) {
      const s: ClusterSettings = { p, radius: 0.6, ptMin: 0, threshold: 0, recombination: p === 1 ? 'wta' : 'e' };
      const engine = new WasmClusterer(DEFAULT_GRID, s);
      const reference = new ReferenceClusterer(DEFAULT_GRID, s);
      for (let k = 0; k < 12; k++) {
        const event = randomEvent(DEFAULT_GRID, { towers: 150, hardJets: 1, region: k % 2 ? 'patch' : 'anywhere' }, random);
        for (let t = 0; t < event.towerEt.length; t++) {
          const pick = random();
          if (pick < 0.1) event.towerEt[t] = 1e-150 * (1 + 10 * random());
          else if (pick < 0.2) event.towerEt[t] = 1e149 * (1 + 9 * random());
          else if (pick < 0.25) event.towerEt[t] = 1e-145;
        }
        const difference = firstJetDifference(engine.cluster(event.towerIndex, event.towerEt), reference.cluster(event.towerIndex, event.towerEt));
        if (difference) failures.push(`p ${p} event ${k}: ${difference}`);
      }
    }
    expect(failures).toEqual([]);
  }, 60_000);
});

describe('the engine instance', () => {
  it('keeps its memory size over 100,000 clustered events', () => {
    const engine = new WasmClusterer(DEFAULT_GRID, DEFAULT_SETTINGS);
    const random = makeRandom(21);
    const events = Array.from({ length: 100 }, () => randomEvent(DEFAULT_GRID, { towers: 20, hardJets: 1 }, random));
    const flat = flatten(events);
    engine.clusterBatch(events.length, flat.starts, flat.index, flat.et, true);
    const before = engine.memoryBytes();
    for (let round = 0; round < 1000; round++) engine.clusterBatch(events.length, flat.starts, flat.index, flat.et, false);
    expect(engine.memoryBytes()).toBe(before);
  }, 60_000);

  it('gives the same jets from the debug and the release build', () => {
    const release = new WasmClusterer(DEFAULT_GRID, settings);
    const debug = new WasmClusterer(DEFAULT_GRID, settings, { debug: true });
    const random = makeRandom(4);
    for (let k = 0; k < 20; k++) {
      const event = randomEvent(DEFAULT_GRID, { towers: 500, hardJets: 3 }, random);
      expect(firstJetDifference(release.cluster(event.towerIndex, event.towerEt), debug.cluster(event.towerIndex, event.towerEt))).toBeNull();
    }
  });

  it('compiles the module once per thread and accepts a module handed in', () => {
    const module = loadEngineModule();
    expect(loadEngineModule()).toBe(module);
    const engine = new WasmClusterer(DEFAULT_GRID, DEFAULT_SETTINGS, { module });
    expect(engine.name).toBe('wasm');
  });

  it('rejects a radius it cannot use with an error naming the setting', () => {
    expect(() => new WasmClusterer(DEFAULT_GRID, { ...DEFAULT_SETTINGS, radius: 0 })).toThrow(/settings\.radius/);
    expect(() => new WasmClusterer(DEFAULT_GRID, { ...DEFAULT_SETTINGS, p: Number.NaN })).toThrow(/settings\.p/);
  });
});
