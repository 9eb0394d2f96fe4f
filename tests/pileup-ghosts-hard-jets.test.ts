// Ghosts and hard anti-kt jets (clustering-spec.md section 8). Ghosts carry 1e-100 GeV, far
// below half an ulp of any real jet's momentum, so adding one to a real jet leaves its
// four-vector's bits alone. They still take part in the sequence: a soft real tower that takes
// a ghost first gets its y, phi and kt2 recomputed from its four-vector (a few ulp from the
// tower centre's), and real towers' indices shift. Where two merges into a hard jet have equal
// or nearly equal measures, that can change the order in which the jet adds its real towers,
// and so its last bits; the spec allows exactly this for anti-kt and nothing more. What holds
// to the bit is a jet of one real tower; what holds for every hard jet is the same real
// constituents and a four-vector equal to within a few ulp.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type JetSet } from '../host/types.js';
import { seededRandom } from './support/small-events.js';
import { pileupEvents } from './support/random-events.js';

const antiKt: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
const tables = makeGridTables(DEFAULT_GRID);

function towersOf(jets: JetSet, n: number): number[] {
  return Array.from(jets.towers.subarray(jets.towerStart[n], jets.towerStart[n] + jets.towerCount[n]));
}

describe('adding ghosts to anti-kt', () => {
  it('leaves the four-vector of a one-tower hard jet identical to the bit', () => {
    // three isolated hard towers, one on the phi seam
    const towerIndex = Int32Array.from([10 * 64 + 0, 25 * 64 + 21, 40 * 64 + 43]);
    const towerEt = Float64Array.from([35.5, 120.25, 61]);
    const plain = clusterWithPileup(tables, towerIndex, towerEt, antiKt, DEFAULT_PILEUP_SETTINGS);
    const ghosted = clusterWithPileup(tables, towerIndex, towerEt, antiKt, { ...DEFAULT_PILEUP_SETTINGS, areas: true });
    expect(ghosted.count).toBe(plain.count);
    for (let n = 0; n < plain.count; n++) {
      expect(towersOf(ghosted, n)).toEqual(towersOf(plain, n));
      expect(ghosted.pileup!.ghosts[n]).toBeGreaterThan(40);
      for (const field of ['px', 'py', 'pz', 'energy'] as const) expect(Object.is(ghosted[field][n], plain[field][n])).toBe(true);
    }
  }, 60_000);

  it('keeps every hard jet of pileup-like events with its real towers and its four-vector to within 4 ulp', () => {
    const random = seededRandom(3);
    let hardJets = 0;
    for (const event of pileupEvents(DEFAULT_GRID, 850, 3, random)) {
      const plain = clusterWithPileup(tables, event.towerIndex, event.towerEt, antiKt, DEFAULT_PILEUP_SETTINGS);
      const ghosted = clusterWithPileup(tables, event.towerIndex, event.towerEt, antiKt, { ...DEFAULT_PILEUP_SETTINGS, areas: true });
      for (let n = 0; n < plain.count && plain.pt[n] >= 20; n++) {
        hardJets++;
        const first = plain.towers[plain.towerStart[n]];
        let m = 0;
        while (m < ghosted.count && ghosted.towers[ghosted.towerStart[m]] !== first) m++;
        expect(m).toBeLessThan(ghosted.count);
        expect(towersOf(ghosted, m)).toEqual(towersOf(plain, n));
        for (const field of ['px', 'py', 'pz', 'energy'] as const) {
          // 4 ulp of the jet's energy: the largest component, and a few roundings of reordering
          expect(Math.abs(ghosted[field][m] - plain[field][n])).toBeLessThanOrEqual(4 * Number.EPSILON * plain.energy[n]);
        }
      }
    }
    expect(hardJets).toBeGreaterThan(3);
  }, 60_000);
});
