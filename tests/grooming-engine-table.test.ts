// The engine's grooming against the reference, bit for bit, on jets made to test soft drop's
// table of a jet's live jets in increasing y (assembly/groom-pairs.ts, searches stopped by dy
// alone; trimming, on the event grid's cells, gets the same jets): every tower in one row
// (equal y everywhere, no search can stop early), every tower in
// one column, a full block of cells (equal distances everywhere, so the ties of clustering-spec.md
// section 4 decide), a row across the phi seam, unsorted constituents (the engine's own sort),
// and one jet of several hundred towers spread over the grid.

import { describe, expect, it } from 'vitest';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { allocateJetSet } from '../host/clustering/jet-set.js';
import type { Grid, GroomingSettings } from '../host/types.js';
import { firstGroomedDifference } from './support/groomed-equality.js';
import { seededRandom } from './support/small-events.js';

const grid: Grid = { etaMin: -2, etaMax: 2, etaBins: 40, phiBins: 48 };

const SETTINGS: [string, GroomingSettings][] = [
  ['soft drop 0.1:0', { trim: null, softDrop: { zCut: 0.1, beta: 0 } }],
  ['soft drop 0.2:1', { trim: null, softDrop: { zCut: 0.2, beta: 1 } }],
  ['trimming 0.2:0.05', { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null }],
  ['trimming 0.5:0.1', { trim: { subjetRadius: 0.5, ptFraction: 0.1 }, softDrop: null }],
];

/** flat indices of the cells (ieta, iphi), iphi taken round the seam */
function cells(pairs: [number, number][]): number[] {
  return pairs.map(([ieta, iphi]) => ieta * grid.phiBins + (((iphi % grid.phiBins) + grid.phiBins) % grid.phiBins));
}

function jetShapes(random: () => number): [string, number[]][] {
  const row: [number, number][] = [];
  const column: [number, number][] = [];
  const block: [number, number][] = [];
  const seamRow: [number, number][] = [];
  for (let k = 0; k < 20; k++) row.push([17, 10 + k]);
  for (let k = 0; k < 20; k++) column.push([10 + k, 30]);
  for (let a = 0; a < 8; a++) for (let b = 0; b < 8; b++) block.push([15 + a, 20 + b]);
  for (let k = -8; k < 8; k++) seamRow.push([22, k]);
  const spread = new Set<number>();
  while (spread.size < 400) spread.add(Math.floor(random() * grid.etaBins * grid.phiBins));
  return [['one row', cells(row)], ['one column', cells(column)], ['a full 8 x 8 block', cells(block)],
    ['a row across the seam', cells(seamRow)], ['400 towers spread over the grid', [...spread]]];
}

describe('engine grooming on the live-jet table: the reference bit for bit', () => {
  for (const [name, grooming] of SETTINGS) {
    it(`${name}: rows, columns, blocks, the seam and a 400-tower jet, each with equal and random et`, () => {
      const reference = new ReferenceGroomer(grid, grooming, 1);
      const engine = new EngineGroomer(grid, grooming, 1);
      const random = seededRandom(1600 + name.length);
      let checked = 0;
      for (const [shape, towers] of jetShapes(random)) {
        for (const equalEt of [true, false]) {
          const towerEt = Float64Array.from(towers, () => (equalEt ? 5 : 0.5 + 40 * random()));
          const towerIndex = Int32Array.from(towers);
          const sorted = Int32Array.from(towers).sort();
          const jets = allocateJetSet(1);
          jets.towers = sorted;
          jets.towerCount[0] = sorted.length;
          jets.pt[0] = towerEt.reduce((sum, et) => sum + et, 0);
          const copy = { ...jets };
          reference.groom(jets, towerIndex, towerEt);
          engine.groom(copy, towerIndex, towerEt);
          expect(firstGroomedDifference(copy, jets), `${shape}, ${equalEt ? 'equal' : 'random'} et`).toBeNull();
          checked++;
        }
      }
      expect(checked).toBe(10);
    });
  }

  it('constituents out of order (the engine sorts them itself) give the same rows as in order', () => {
    const grooming: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } };
    const engine = new EngineGroomer(grid, grooming, 1);
    const random = seededRandom(16);
    const towers = cells([[10, 5], [10, 6], [11, 5], [12, 9], [14, 3], [9, 8], [13, 4]]);
    const towerEt = Float64Array.from(towers, () => 1 + 20 * random());
    const inOrder = allocateJetSet(1);
    inOrder.towers = Int32Array.from(towers).sort();
    inOrder.towerCount[0] = towers.length;
    inOrder.pt[0] = 50;
    const outOfOrder = { ...inOrder, towers: Int32Array.from(inOrder.towers).reverse() };
    engine.groom(inOrder, Int32Array.from(towers), towerEt);
    engine.groom(outOfOrder, Int32Array.from(towers), towerEt);
    expect(inOrder.softDrop!.towerCount[0]).toBeGreaterThan(0);
    expect(firstGroomedDifference(outOfOrder, inOrder)).toBeNull();
  });
});
