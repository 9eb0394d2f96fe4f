// Area subtraction (clustering-spec.md section 9): ptSub = pt - rho * area, the four-vector
// scaled by ptSub / pt, jets at or below zero removed and counted, ptMin and order after it.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { subtractFromJet } from '../host/clustering/pileup/subtract.js';
import { DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid, type PileupSettings } from '../host/types.js';
import { seededRandom, smallEvent } from './support/small-events.js';

describe('subtracting rho * area from one jet', () => {
  it('scales the four-vector by ptSub / pt and recomputes the mass', () => {
    // pt 5 (3, 4), rho * area = 2 * 1.25 = 2.5: f = 0.5, every value exact in binary
    const jet = subtractFromJet(3, 4, 12, 14, 5, 1.25, 2);
    expect(jet).toEqual({ px: 1.5, py: 2, pz: 6, energy: 7, pt: 2.5, mass: Math.sqrt(49 - 2.25 - 4 - 36) });
  }, 60_000);

  it('removes a jet whose subtracted pt is exactly zero or below', () => {
    expect(subtractFromJet(3, 4, 12, 14, 5, 2.5, 2)).toBeNull();
    expect(subtractFromJet(3, 4, 12, 14, 5, 3, 2)).toBeNull();
  }, 60_000);
});

describe('subtraction in the chain', () => {
  // 3 rows of 1 in eta, 4 columns of pi/2 in phi, anti-kt R = 1.2: a jet takes the cells above
  // and below it (distance 1) and nothing across columns (distance pi/2 or more)
  const grid: Grid = { etaMin: -1.5, etaMax: 1.5, etaBins: 3, phiBins: 4 };
  const tables = makeGridTables(grid);
  const settings: ClusterSettings = { p: -1, radius: 1.2, ptMin: 0, threshold: 0, recombination: 'e' };
  // A 12 GeV in the middle row, column 0 (3 cells); B 10 GeV in the top row, column 2 (2 cells:
  // the bottom cell of its column is beyond R); C 7 GeV and D 1 GeV in the middle row (3 cells)
  const towerIndex = Int32Array.from([4, 2, 5, 7]);
  const towerEt = Float64Array.from([12, 10, 7, 1]);
  // one patch over the whole grid: rho = 30 GeV over 12 cells, 2.5 GeV a cell
  const pileup: PileupSettings = { ...DEFAULT_PILEUP_SETTINGS, areas: true, subtract: true, rho: { kind: 'patches', patch: { etaRows: 3, phiColumns: 4 } } };

  it('reorders by subtracted pt and counts the jets it removes (worked by hand)', () => {
    const jets = clusterWithPileup(tables, towerIndex, towerEt, settings, pileup);
    const values = jets.pileup!;
    const cellArea = 1 * (Math.PI / 2);
    expect(values.rho).toBe(30 / (12 * cellArea));
    // C (7 - 7.5) and D (1 - 7.5) go; B (10 - 5) now leads A (12 - 7.5)
    expect(values.subtractedAway).toBe(2);
    expect(jets.count).toBe(2);
    expect(Array.from(jets.towers)).toEqual([2, 4]);
    expect(Array.from(values.ghosts)).toEqual([1, 2]);
    expect(jets.pt[0]).toBeCloseTo(5, 12);
    expect(jets.pt[1]).toBeCloseTo(4.5, 12);
    expect(values.ptRaw[0]).toBeCloseTo(10, 12);
    expect(values.ptRaw[1]).toBeCloseTo(12, 12);
  }, 60_000);

  it('applies ptMin to the subtracted pt, without counting those jets as subtracted away', () => {
    const jets = clusterWithPileup(tables, towerIndex, towerEt, { ...settings, ptMin: 4.8 }, pileup);
    expect(jets.count).toBe(1);
    expect(jets.towers[0]).toBe(2);
    expect(jets.pileup!.subtractedAway).toBe(2);
  }, 60_000);

  it('follows the spec formula to the bit on random events, in decreasing subtracted pt', () => {
    const small: Grid = { etaMin: -1.2, etaMax: 1.2, etaBins: 24, phiBins: 32 };
    const smallTables = makeGridTables(small);
    const random = seededRandom(8);
    const subtracting: PileupSettings = { ...DEFAULT_PILEUP_SETTINGS, areas: true, subtract: true };
    let removed = 0;
    for (let e = 0; e < 6; e++) {
      const event = smallEvent(small, { towers: 60 + 40 * e }, random);
      const plainSettings = { ...settings, radius: 0.4 };
      const raw = clusterWithPileup(smallTables, event.towerIndex, event.towerEt, plainSettings, { ...subtracting, subtract: false, rho: { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } } });
      const sub = clusterWithPileup(smallTables, event.towerIndex, event.towerEt, plainSettings, subtracting);
      const rho = sub.pileup!.rho;
      expect(raw.pileup!.rho).toBe(rho);
      // each raw jet, found by its first tower, either went or was scaled by (pt - rho A) / pt
      let away = 0;
      for (let n = 0; n < raw.count; n++) {
        const ptSub = raw.pt[n] - rho * raw.pileup!.area[n];
        let m = 0;
        while (m < sub.count && sub.towers[sub.towerStart[m]] !== raw.towers[raw.towerStart[n]]) m++;
        if (ptSub <= 0) {
          away++;
          expect(m).toBe(sub.count);
          continue;
        }
        const f = ptSub / raw.pt[n];
        const [px, py, pz, energy] = [raw.px[n] * f, raw.py[n] * f, raw.pz[n] * f, raw.energy[n] * f];
        const mass = Math.sqrt(Math.max(0, energy * energy - px * px - py * py - pz * pz));
        expect([sub.pt[m], sub.px[m], sub.py[m], sub.pz[m], sub.energy[m], sub.mass[m], sub.rapidity[m], sub.phi[m], sub.pileup!.ptRaw[m]])
          .toEqual([ptSub, px, py, pz, energy, mass, raw.rapidity[n], raw.phi[n], raw.pt[n]]);
      }
      expect(sub.pileup!.subtractedAway).toBe(away);
      expect(sub.count).toBe(raw.count - away);
      for (let m = 1; m < sub.count; m++) expect(sub.pt[m]).toBeLessThanOrEqual(sub.pt[m - 1]);
      removed += away;
    }
    expect(removed).toBeGreaterThan(0);
  }, 60_000);
});
