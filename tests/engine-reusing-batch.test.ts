// WasmClusterer.clusterBatchReusing: the jets of clusterBatch, in arrays the clusterer keeps and
// overwrites on its next call (the pileup chain copies them out before then; a pool worker checks
// and encodes a batch before its next).

import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { batchEventJets } from '../host/clustering/engine-batch.js';
import { firstJetDifference } from '../host/validate/bit-exact.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';
import { batchOf, fullGridEvent, makeRandom, pileupEvents } from './support/random-events.js';

const engine = new WasmClusterer(DEFAULT_GRID, DEFAULT_SETTINGS, { debug: true });

describe('clusterBatchReusing', () => {
  it('gives clusterBatch\'s jets bit for bit, with and without constituents', () => {
    const random = makeRandom(4);
    const events = [...pileupEvents(DEFAULT_GRID, 850, 4, random), fullGridEvent(DEFAULT_GRID, random), fullGridEvent(DEFAULT_GRID, random, true)];
    for (const event of events) {
      const start = Int32Array.of(0, event.towerIndex.length);
      for (const withTowers of [true, false]) {
        const expected = batchEventJets(engine.clusterBatch(1, start, event.towerIndex, event.towerEt, withTowers), 0);
        const reused = batchEventJets(engine.clusterBatchReusing(1, start, event.towerIndex, event.towerEt, withTowers), 0);
        expect(firstJetDifference(reused, expected)).toBeNull();
        expect(reused.towers.length).toBe(expected.towers.length);
      }
    }
  });

  it('writes the next call into the same arrays', () => {
    const [a, b] = pileupEvents(DEFAULT_GRID, 850, 2, makeRandom(5));
    const first = engine.clusterBatchReusing(1, Int32Array.of(0, a.towerIndex.length), a.towerIndex, a.towerEt, true);
    const second = engine.clusterBatchReusing(1, Int32Array.of(0, b.towerIndex.length), b.towerIndex, b.towerEt, true);
    expect(second.pt.buffer).toBe(first.pt.buffer);
  });

  it('grows its arrays for a larger batch and still gives clusterBatch\'s jets, event by event', () => {
    const random = makeRandom(6);
    const small = batchOf(pileupEvents(DEFAULT_GRID, 850, 2, random));
    // 40 events of 850 towers: more towers than the grid has cells, so the arrays must grow
    const large = batchOf(pileupEvents(DEFAULT_GRID, 850, 40, random));
    for (const batch of [small, large, small]) {
      const count = batch.towerStart.length - 1;
      const reused = engine.clusterBatchReusing(count, batch.towerStart, batch.towerIndex, batch.towerEt, true);
      const reusedSets = Array.from({ length: count }, (_, e) => batchEventJets(reused, e));
      const expected = engine.clusterBatch(count, batch.towerStart, batch.towerIndex, batch.towerEt, true);
      for (let e = 0; e < count; e++) expect(firstJetDifference(reusedSets[e], batchEventJets(expected, e)), `event ${e} of ${count}`).toBeNull();
    }
  });
});
