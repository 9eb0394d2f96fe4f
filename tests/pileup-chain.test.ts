// The order of the pileup chain's steps (clustering-spec.md part two, top).

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid } from '../host/types.js';
import { seededRandom, smallEvent } from './support/small-events.js';

const grid: Grid = { etaMin: -1.2, etaMax: 1.2, etaBins: 24, phiBins: 32 };
const tables = makeGridTables(grid);

describe('the pileup chain', () => {
  it('with every step off gives the plain reference to the bit (spec section 8, last item)', () => {
    const random = seededRandom(12);
    for (let e = 0; e < 20; e++) {
      const event = smallEvent(grid, { towers: 5 + 10 * e, ties: e % 3 === 0, seam: e % 5 === 1 }, random);
      const settings: ClusterSettings = { p: [-1, 0, 1, 0.5][e % 4], radius: 0.4, ptMin: e % 2 === 0 ? 0 : 3, threshold: 0.7, recombination: e % 7 === 3 ? 'wta' : 'e' };
      const plain = new ReferenceClusterer(grid, settings).cluster(event.towerIndex, event.towerEt);
      const chained = clusterWithPileup(tables, event.towerIndex, event.towerEt, settings, DEFAULT_PILEUP_SETTINGS);
      const { pileup, ...jets } = chained;
      expect(jets).toEqual(plain);
      expect(Array.from(pileup!.ptRaw)).toEqual(Array.from(plain.pt));
    }
  }, 60_000);

  it('clusters only the towers SoftKiller kept, with ghosts on at most the other cells', () => {
    const random = seededRandom(5);
    const event = smallEvent(grid, { towers: 400 }, random);
    const jets = clusterWithPileup(tables, event.towerIndex, event.towerEt, { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' },
      { ...DEFAULT_PILEUP_SETTINGS, areas: true, softKiller: { etaRows: 5, phiColumns: 5 } });
    const { etCut, killed, ghosts } = jets.pileup!;
    const kept = Array.from(event.towerIndex).filter((_, k) => event.towerEt[k] >= etCut);
    expect(killed).toBe(event.towerIndex.length - kept.length);
    expect(killed).toBeGreaterThan(0);
    expect(Array.from(jets.towers).sort((a, b) => a - b)).toEqual(kept.sort((a, b) => a - b));
    // reported jets' cells plus pure-ghost jets' cells fill the grid, so the reported ones hold
    // at most the cells that are not real towers
    const reportedGhosts = ghosts.reduce((sum, g) => sum + g, 0);
    expect(reportedGhosts).toBeLessThanOrEqual(grid.etaBins * grid.phiBins - kept.length);
  }, 60_000);
});
