// The engine pileup chain's handling of bad indices and its stage times (the values themselves
// are checked against the reference in pileup-engine-bit-exact.test.ts).

import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { EnginePileupClusterer, STAGE_CLUSTERING, STAGE_RHO_KT, STAGE_RHO_PATCHES, STAGE_SOFTKILLER, STAGE_SUBTRACTION } from '../host/clustering/pileup/engine-chain.js';
import { DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid } from '../host/types.js';

const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 10, phiBins: 12 };
const settings: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 1, recombination: 'e' };

describe('the engine pileup chain', () => {
  it('reports a bad index with the plain engine status, areas filling no cell over it', () => {
    const chain = new EnginePileupClusterer(grid, settings, { ...DEFAULT_PILEUP_SETTINGS, areas: true }, 'test', { debug: true });
    const plain = new WasmClusterer(grid, settings, { debug: true });
    const events: [number[], number[]][] = [
      [[3, 120], [5, 6]], // outside the grid
      [[3, -1], [5, 0.5]], // outside, below the threshold
      [[3, 7, 3], [5, 6, 2]], // repeated above the threshold
      [[3, 7, 3], [5, 6, 0.5]], // repeated, once below the threshold: a valid event
    ];
    for (const [index, et] of events) {
      const towerIndex = Int32Array.from(index);
      const towerEt = Float64Array.from(et);
      const expected = plain.clusterBatch(1, Int32Array.from([0, index.length]), towerIndex, towerEt, true).status[0];
      const jets = chain.clusterEvent(towerIndex, towerEt, 0, index.length);
      expect(chain.status).toBe(expected);
      expect(jets === null).toBe(expected !== 0);
    }
  });

  it('times the stages that are on and leaves the others at 0', () => {
    const towerIndex = Int32Array.from([3, 15, 40, 41, 90]);
    const towerEt = Float64Array.from([5, 2, 30, 4, 1.5]);
    const chain = new EnginePileupClusterer(grid, settings,
      { ...DEFAULT_PILEUP_SETTINGS, areas: true, subtract: true, rho: { kind: 'kt', radius: 0.4 }, softKiller: { etaRows: 2, phiColumns: 3 } }, 'test', { debug: true });
    chain.cluster(towerIndex, towerEt);
    for (const stage of [STAGE_SOFTKILLER, STAGE_CLUSTERING, STAGE_RHO_KT, STAGE_SUBTRACTION]) expect(chain.stageNs[stage]).toBeGreaterThan(0);
    expect(chain.stageNs[STAGE_RHO_PATCHES]).toBe(0);
  });
});
