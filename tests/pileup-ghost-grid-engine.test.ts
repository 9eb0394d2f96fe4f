// The engine's ghost-grid entry (assembly/ghost-grid.ts through host/clustering/pileup/
// ghost-grid-engine.ts): the host writes only the real towers and the engine fills the rest, so
// one event must leave nothing behind for the next, and an index outside the grid must not be
// clustered. The chain's values are checked against the reference in
// pileup-engine-bit-exact.test.ts; here the reference clusters the ghost-filled grid as towers.

import { describe, expect, it } from 'vitest';
import { loadEngineModule } from '../host/clustering/engine-module.js';
import { makeGridTables } from '../host/clustering/grid.js';
import { GhostGridEngine, type EngineJetRows } from '../host/clustering/pileup/ghost-grid-engine.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import type { ClusterSettings, Grid, JetSet } from '../host/types.js';
import { firstJetDifference } from './support/jet-equality.js';

const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 10, phiBins: 12 };
const cells = grid.etaBins * grid.phiBins;
const settings: ClusterSettings = { p: 0, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
const GHOST_ET = 1e-100;

function clusterReal(engine: GhostGridEngine, index: number[], et: number[]): EngineJetRows {
  engine.realIndex.set(index);
  engine.realEt.set(et);
  return engine.cluster(index.length, true);
}

/** the engine's rows as a JetSet (copies: the views change with the next call) */
function asJetSet(rows: EngineJetRows): JetSet {
  const n = rows.count;
  const towerTotal = n > 0 ? rows.towerStart[n - 1] + rows.towerCount[n - 1] : 0;
  return {
    count: n,
    px: rows.px.slice(0, n), py: rows.py.slice(0, n), pz: rows.pz.slice(0, n), energy: rows.energy.slice(0, n),
    pt: rows.pt.slice(0, n), rapidity: rows.rapidity.slice(0, n), phi: rows.phi.slice(0, n), mass: rows.mass.slice(0, n),
    towerCount: rows.towerCount.slice(0, n), towerStart: rows.towerStart.slice(0, n), towers: rows.towers.slice(0, towerTotal),
  };
}

describe('the engine ghost grid', () => {
  it('gives the reference jets of the ghost-filled grid for an event after a fuller one', () => {
    const engine = new GhostGridEngine(makeGridTables(grid), settings, GHOST_ET, loadEngineModule(true));
    // a first event with real towers on many cells, whose ets must not survive into the next
    const many = Array.from({ length: 60 }, (_, k) => 2 * k);
    clusterReal(engine, many, many.map((t) => 1 + t / 10));
    const index = [5, 17, 40, 41, 99];
    const et = [3, 0.5, 20, 4, 1.5];
    const jets = asJetSet(clusterReal(engine, index, et));

    const gridEt = new Float64Array(cells).fill(GHOST_ET);
    index.forEach((t, k) => { gridEt[t] = et[k]; });
    const expected = new ReferenceClusterer(grid, settings).cluster(Int32Array.from({ length: cells }, (_, t) => t), gridEt);
    expect(firstJetDifference(jets, expected)).toBeNull();
  });

  it('refuses a real tower outside the grid instead of clustering it', () => {
    const engine = new GhostGridEngine(makeGridTables(grid), settings, GHOST_ET, loadEngineModule(true));
    expect(() => clusterReal(engine, [3, cells], [5, 6])).toThrow(/outside the grid/);
  });
});
