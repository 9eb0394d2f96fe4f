// SoftKiller (clustering-spec.md section 10; arXiv:1407.0408's definition: the cut is the median
// over patches of each patch's hardest tower, and towers below it are removed).

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { softKill } from '../host/clustering/pileup/softkiller.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, type Grid } from '../host/types.js';
import { seededRandom } from './support/small-events.js';

describe('SoftKiller', () => {
  it('removes exactly the towers below X from an event whose patch maxima are all X', () => {
    const random = seededRandom(17);
    const x = 2.75;
    const towerIndex: number[] = [];
    const towerEt: number[] = [];
    // 5:5 patches on the default grid: 10 rows by 13 columns of patches (the last 4 wide);
    // each patch holds one tower of exactly X, some of them two, and softer towers besides
    for (let ieta = 0; ieta < DEFAULT_GRID.etaBins; ieta++) {
      for (let iphi = 0; iphi < DEFAULT_GRID.phiBins; iphi++) {
        const corner = ieta % 5 === 0 && iphi % 5 === 0;
        const twin = ieta % 5 === 4 && iphi % 5 === 3 && random() < 0.5;
        if (corner || twin) towerEt.push(x);
        else if (random() < 0.6) towerEt.push(x * random());
        else continue;
        towerIndex.push(ieta * DEFAULT_GRID.phiBins + iphi);
      }
    }
    const result = softKill(DEFAULT_GRID, Int32Array.from(towerIndex), Float64Array.from(towerEt), { etaRows: 5, phiColumns: 5 });
    const expectedKept = towerIndex.filter((_, k) => !(towerEt[k] < x));
    expect(result.etCut).toBe(x);
    expect(Array.from(result.towerIndex)).toEqual(expectedKept);
    expect(result.killed).toBe(towerIndex.length - expectedKept.length);
    expect(result.killed).toBeGreaterThan(0);
  }, 60_000);

  it('cuts at the mean of the two middle maxima for an even number of patches, empty patches counting 0', () => {
    // 2 x 4 grid cut 1:2: four patches with maxima 0 (empty), 2, 5 and 9: the cut is 3.5
    const grid: Grid = { etaMin: 0, etaMax: 1, etaBins: 2, phiBins: 4 };
    const towerIndex = Int32Array.from([2, 3, 4, 5, 6]);
    const towerEt = Float64Array.from([1.5, 2, 3.5, 5, 9]);
    const result = softKill(grid, towerIndex, towerEt, { etaRows: 1, phiColumns: 2 });
    expect(result.etCut).toBe(3.5);
    // 1.5 and 2 go; 3.5 equals the cut and stays
    expect(Array.from(result.towerIndex)).toEqual([4, 5, 6]);
    expect(result.killed).toBe(2);
  }, 60_000);

  it('runs after the threshold in the chain: below-threshold towers are neither maxima nor killed', () => {
    const grid: Grid = { etaMin: 0, etaMax: 1, etaBins: 2, phiBins: 4 };
    const towerIndex = Int32Array.from([0, 2, 3, 4, 5, 6]);
    const towerEt = Float64Array.from([0.5, 1.5, 2, 3.5, 5, 9]);
    const settings = { p: -1, radius: 0.4, ptMin: 0, threshold: 1, recombination: 'e' as const };
    const jets = clusterWithPileup(makeGridTables(grid), towerIndex, towerEt, settings,
      { ...DEFAULT_PILEUP_SETTINGS, softKiller: { etaRows: 1, phiColumns: 2 } });
    // the 0.5 GeV tower falls to the threshold, so patch 0 is empty and the cut stays 3.5
    expect(jets.pileup!.etCut).toBe(3.5);
    expect(jets.pileup!.killed).toBe(2);
    expect(Array.from(jets.towers).sort((a, b) => a - b)).toEqual([4, 5, 6]);
  }, 60_000);
});
