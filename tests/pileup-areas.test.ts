// Jet areas on ghost cells (clustering-spec.md section 8) in the reference's pileup chain.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid, type PileupSettings } from '../host/types.js';
import { seededRandom, smallEvent } from './support/small-events.js';

const antiKt: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
const withAreas: PileupSettings = { ...DEFAULT_PILEUP_SETTINGS, areas: true };

/** the spec's cell area (part two, notation), written out here rather than imported */
function cellAreaOf(grid: Grid): number {
  return ((grid.etaMax - grid.etaMin) / grid.etaBins) * ((2 * Math.PI) / grid.phiBins);
}

describe('an isolated hard anti-kt jet', () => {
  const tables = makeGridTables(DEFAULT_GRID);
  // in the middle of the grid, and on the phi seam (column 0) so that its circle wraps round
  for (const [ieta, iphi] of [[25, 20], [20, 0]]) {
    it(`holds 47-49 cells at R = 0.4 on the default grid (tower ${ieta}, ${iphi})`, () => {
      const tower = ieta * DEFAULT_GRID.phiBins + iphi;
      const jets = clusterWithPileup(tables, Int32Array.from([tower]), Float64Array.from([100]), antiKt, withAreas);
      // arXiv:0802.1188: an anti-kt jet's active area is pi R^2 in the continuum (about 51.2
      // cells here); on this grid it is 47-49 cells (spec section 8)
      expect(jets.count).toBe(1);
      expect(jets.towerCount[0]).toBe(1);
      const cells = jets.towerCount[0] + jets.pileup!.ghosts[0];
      expect(cells).toBeGreaterThanOrEqual(47);
      expect(cells).toBeLessThanOrEqual(49);
      expect(jets.pileup!.area[0]).toBe(cells * cellAreaOf(DEFAULT_GRID));
    }, 60_000);
  }
});

describe('reported jets with areas on', () => {
  const grid: Grid = { etaMin: -1.2, etaMax: 1.2, etaBins: 24, phiBins: 32 };
  const tables = makeGridTables(grid);

  it('hold every real tower once, list only real towers and never a pure-ghost jet', () => {
    const random = seededRandom(21);
    for (let e = 0; e < 5; e++) {
      const event = smallEvent(grid, { towers: 12 + e * 9 }, random);
      for (const p of [-1, 0, 1]) {
        const jets = clusterWithPileup(tables, event.towerIndex, event.towerEt, { ...antiKt, p }, withAreas);
        const real = new Set(event.towerIndex);
        const seen: number[] = [];
        for (let n = 0; n < jets.count; n++) {
          expect(jets.towerCount[n]).toBeGreaterThan(0);
          const towers = jets.towers.subarray(jets.towerStart[n], jets.towerStart[n] + jets.towerCount[n]);
          for (const t of towers) expect(real.has(t)).toBe(true);
          seen.push(...towers);
          expect(jets.pileup!.area[n]).toBe((jets.towerCount[n] + jets.pileup!.ghosts[n]) * cellAreaOf(grid));
        }
        expect(seen.sort((a, b) => a - b)).toEqual(Array.from(event.towerIndex).sort((a, b) => a - b));
      }
    }
  }, 60_000);

  it('report zero ghosts and zero area when areas are off', () => {
    const event = smallEvent(grid, { towers: 30 }, seededRandom(4));
    const jets = clusterWithPileup(tables, event.towerIndex, event.towerEt, antiKt, DEFAULT_PILEUP_SETTINGS);
    expect(jets.count).toBeGreaterThan(0);
    expect(Array.from(jets.pileup!.ghosts).every((g) => g === 0)).toBe(true);
    expect(Array.from(jets.pileup!.area).every((a) => a === 0)).toBe(true);
  }, 60_000);
});
