// Seeded random tower events for the engine's tests and benchmark. Invented data: a toy
// "pileup plus a few hard jets" scenario of our own, not a physics simulation.
// Every generator returns one valid event (distinct flat indices), towers in shuffled order, and
// may include towers at or below a threshold so that clusterers must drop them themselves.

import type { Grid } from '../../host/types.js';

export interface TowerArrays {
  towerIndex: Int32Array;
  towerEt: Float64Array;
}

// the project's one seeded generator, shared with the demo events
export { makeRandom } from '../../host/random.js';

export type Region = 'anywhere' | 'seam' | 'edges' | 'patch';

export interface EventShape {
  /** towers in the event (capped by the grid) */
  towers: number;
  /** hard jets laid over the soft background */
  hardJets?: number;
  /** energies drawn from a few values only, so that many are equal */
  ties?: boolean;
  /** where the towers sit: anywhere, the phi seam columns, the first and last eta rows, or a small patch */
  region?: Region;
  /** fraction of towers given et <= 0 (dropped by every threshold) */
  dead?: number;
}

const TIE_VALUES = [0.5, 1, 1, 2, 2, 2, 4, 8];

function pickCells(grid: Grid, count: number, region: Region, random: () => number): number[] {
  const { etaBins, phiBins } = grid;
  const allowed: number[] = [];
  const patchEta = Math.floor(random() * etaBins);
  const patchPhi = Math.floor(random() * phiBins);
  for (let ieta = 0; ieta < etaBins; ieta++) {
    for (let iphi = 0; iphi < phiBins; iphi++) {
      const seamColumn = iphi < 3 || iphi >= phiBins - 3;
      const edgeRow = ieta < 3 || ieta >= etaBins - 3;
      const dphi = Math.min(Math.abs(iphi - patchPhi), phiBins - Math.abs(iphi - patchPhi));
      const inPatch = Math.abs(ieta - patchEta) <= 3 && dphi <= 3;
      if (region === 'anywhere' || (region === 'seam' && seamColumn) || (region === 'edges' && edgeRow) ||
        (region === 'patch' && inPatch)) {
        allowed.push(ieta * phiBins + iphi);
      }
    }
  }
  const n = Math.min(count, allowed.length);
  for (let k = 0; k < n; k++) {
    const m = k + Math.floor(random() * (allowed.length - k));
    const swap = allowed[k];
    allowed[k] = allowed[m];
    allowed[m] = swap;
  }
  return allowed.slice(0, n);
}

/** One event of the given shape on the grid. */
export function randomEvent(grid: Grid, shape: EventShape, random: () => number): TowerArrays {
  const cells = pickCells(grid, shape.towers, shape.region ?? 'anywhere', random);
  const etaWidth = (grid.etaMax - grid.etaMin) / grid.etaBins;
  const phiWidth = (2 * Math.PI) / grid.phiBins;
  const centres: { eta: number; phi: number; pt: number }[] = [];
  for (let j = 0; j < (shape.hardJets ?? 0); j++) {
    centres.push({
      eta: grid.etaMin + random() * (grid.etaMax - grid.etaMin),
      phi: random() * 2 * Math.PI,
      pt: 20 + 200 * random(),
    });
  }
  const towerIndex = new Int32Array(cells.length);
  const towerEt = new Float64Array(cells.length);
  for (let k = 0; k < cells.length; k++) {
    const cell = cells[k];
    const ieta = Math.floor(cell / grid.phiBins);
    const iphi = cell - ieta * grid.phiBins;
    let et: number;
    if (shape.ties) et = TIE_VALUES[Math.floor(random() * TIE_VALUES.length)];
    else {
      et = -Math.log(1 - random()) * 0.8; // soft background, GeV
      const eta = grid.etaMin + (ieta + 0.5) * etaWidth;
      const phi = (iphi + 0.5) * phiWidth;
      for (const c of centres) {
        let dphi = Math.abs(phi - c.phi);
        if (dphi > Math.PI) dphi = 2 * Math.PI - dphi;
        const dr = Math.hypot(eta - c.eta, dphi);
        if (dr < 0.5) et += c.pt * Math.exp(-dr / 0.06) * 0.15;
      }
    }
    if (shape.dead && random() < shape.dead) et = random() < 0.5 ? 0 : -et;
    towerIndex[k] = cell;
    towerEt[k] = et;
  }
  return { towerIndex, towerEt };
}

/** Every tower of the grid occupied. */
export function fullGridEvent(grid: Grid, random: () => number, ties = false): TowerArrays {
  return randomEvent(grid, { towers: grid.etaBins * grid.phiBins, hardJets: 3, ties }, random);
}

/** Pileup-like events: `towers` towers each (capped by the grid) over 1-4 hard jets. */
export function pileupEvents(grid: Grid, towers: number, count: number, random: () => number): TowerArrays[] {
  return Array.from({ length: count }, () => randomEvent(grid, { towers, hardJets: 1 + Math.floor(random() * 4) }, random));
}

/** Events one after another in flat arrays, as a clusterer's batch takes them: event e's towers
 * are towerStart[e]..towerStart[e + 1]. */
export function batchOf(events: TowerArrays[]): TowerArrays & { towerStart: Int32Array } {
  const towerStart = new Int32Array(events.length + 1);
  events.forEach((event, k) => { towerStart[k + 1] = towerStart[k] + event.towerIndex.length; });
  const towerIndex = new Int32Array(towerStart[events.length]);
  const towerEt = new Float64Array(towerStart[events.length]);
  events.forEach((event, k) => { towerIndex.set(event.towerIndex, towerStart[k]); towerEt.set(event.towerEt, towerStart[k]); });
  return { towerStart, towerIndex, towerEt };
}
