// The mean active area of single-tower kt and C/A jets on ghost cells (clustering-spec.md
// section 8). The reference takes O(N^2) per event and a full default grid (3200 cells) takes it
// about 1.5 s, so this statistical check runs on a narrower grid of the same cells: 20 rows of
// 0.1 in eta by 64 columns in phi, with the hard towers kept 0.7 or more from the eta edges.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { DEFAULT_PILEUP_SETTINGS, type Grid } from '../host/types.js';
import { seededRandom } from './support/small-events.js';

const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 20, phiBins: 64 };
const radius = 0.4;
const events = 70;
/** three hard towers per event, one in each third of the azimuth, at least 12 columns (2.9 R) apart */
const towersPerEvent = 3;

function meanSingleTowerArea(p: number, seed: number): { mean: number; jets: number } {
  const tables = makeGridTables(grid);
  const random = seededRandom(seed);
  const cellArea = ((grid.etaMax - grid.etaMin) / grid.etaBins) * ((2 * Math.PI) / grid.phiBins);
  let sum = 0;
  let jets = 0;
  for (let e = 0; e < events; e++) {
    const towerIndex: number[] = [];
    for (let s = 0; s < towersPerEvent; s++) {
      const ieta = 7 + Math.floor(random() * 6);
      const iphi = s * 21 + 6 + Math.floor(random() * 10);
      towerIndex.push(ieta * grid.phiBins + iphi);
    }
    const towerEt = Float64Array.from(towerIndex, () => 20 + 80 * random());
    const result = clusterWithPileup(tables, Int32Array.from(towerIndex), towerEt,
      { p, radius, ptMin: 0, threshold: 0, recombination: 'e' }, { ...DEFAULT_PILEUP_SETTINGS, areas: true });
    for (let n = 0; n < result.count; n++) {
      expect(result.towerCount[n]).toBe(1);
      sum += (result.towerCount[n] + result.pileup!.ghosts[n]) * cellArea;
      jets++;
    }
  }
  return { mean: sum / jets / (Math.PI * radius * radius), jets };
}

describe('single-tower jets with areas', () => {
  // arXiv:0802.1188: the active area of a one-particle kt or C/A jet averages about 0.81 pi R^2
  for (const [name, p] of [['kt', 1], ['Cambridge/Aachen', 0]] as const) {
    it(`average 0.75-0.87 pi R^2 for ${name} over 200 or more jets`, () => {
      const { mean, jets } = meanSingleTowerArea(p, 31 + p);
      expect(jets).toBeGreaterThanOrEqual(200);
      expect(mean).toBeGreaterThanOrEqual(0.75);
      expect(mean).toBeLessThanOrEqual(0.87);
    }, 120_000);
  }
});
