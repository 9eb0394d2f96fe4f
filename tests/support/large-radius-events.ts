// Seeded events for large-R grooming tests: a few hard objects, each two or three prongs a few
// towers apart spread over several cells, soft towers around them, and thin noise elsewhere.
// Options put the objects on the phi seam, give prongs equal energies (equal-pt parents) or
// leave an isolated hard tower (a one-tower jet). Invented data.

import type { Grid } from '../../host/types.js';

export interface LargeRadiusShape {
  /** hard objects in the event */
  objects: number;
  /** the objects straddle the phi seam (columns 0 and phiBins - 1) */
  seam?: boolean;
  /** prongs take equal energies, and so do their neighbours */
  equalPt?: boolean;
  /** one extra isolated tower far from everything, hard enough to be a jet of its own */
  lonelyTower?: boolean;
  /** fraction of the other cells holding a soft noise tower */
  noise?: number;
}

export function largeRadiusEvent(grid: Grid, shape: LargeRadiusShape, random: () => number): { towerIndex: Int32Array; towerEt: Float64Array } {
  const cellEt = new Map<number, number>();
  const add = (ieta: number, iphi: number, et: number) => {
    if (ieta < 0 || ieta >= grid.etaBins) return;
    const column = ((iphi % grid.phiBins) + grid.phiBins) % grid.phiBins;
    const t = ieta * grid.phiBins + column;
    cellEt.set(t, (cellEt.get(t) ?? 0) + et);
  };
  for (let o = 0; o < shape.objects; o++) {
    const centreEta = 2 + Math.floor(random() * (grid.etaBins - 4));
    const centrePhi = shape.seam ? (random() < 0.5 ? 0 : grid.phiBins - 1) : Math.floor(random() * grid.phiBins);
    const prongs = random() < 0.5 ? 2 : 3;
    for (let p = 0; p < prongs; p++) {
      const ieta = centreEta + Math.floor((random() - 0.5) * 7);
      const iphi = centrePhi + Math.floor((random() - 0.5) * 7);
      const et = shape.equalPt ? 40 : 10 + 90 * random();
      add(ieta, iphi, et);
      // the prong's spread over its neighbours
      for (let s = 0; s < 4; s++) add(ieta + Math.floor((random() - 0.5) * 3), iphi + Math.floor((random() - 0.5) * 3), shape.equalPt ? 4 : 0.2 + 5 * random());
    }
    // soft wide-angle radiation
    for (let s = 0; s < 6; s++) add(centreEta + Math.floor((random() - 0.5) * 16), centrePhi + Math.floor((random() - 0.5) * 16), shape.equalPt ? 1 : 0.1 + 2 * random());
  }
  if (shape.lonelyTower) add(Math.floor(random() * grid.etaBins), Math.floor(random() * grid.phiBins), 50);
  const noise = shape.noise ?? 0.05;
  for (let t = 0; t < grid.etaBins * grid.phiBins; t++) {
    if (!cellEt.has(t) && random() < noise) cellEt.set(t, shape.equalPt ? 0.5 : 0.05 + random());
  }
  const towerIndex = Int32Array.from(cellEt.keys());
  return { towerIndex, towerEt: Float64Array.from(towerIndex, (t) => cellEt.get(t)!) };
}
