// Jet areas on ghost cells (clustering-spec.md section 8). Every grid cell without a real tower
// gets a ghost tower of negligible et; the ghosts are clustered like towers, and a jet's area is
// the number of cells it gathered times the cell area: the active area of arXiv:0802.1188 with
// the grid's cells as its ghosts.

import type { GridTables } from '../grid.js';
import { clusterReference } from '../reference.js';
import type { ClusterSettings, JetSet } from '../../types.js';
import { cellAreaOf } from './patches.js';

export interface GhostedEvent {
  /** every grid cell once, in increasing flat index: real towers where the event has them */
  towerIndex: Int32Array;
  towerEt: Float64Array;
  /** 1 for a cell that holds a ghost, by flat tower index */
  isGhost: Uint8Array;
}

/**
 * Fills every empty cell with a ghost of et `ghostEt`. The towers given are the real ones after
 * the threshold and SoftKiller, each cell at most once, in any order.
 */
export function addGhosts(tables: GridTables, towerIndex: Int32Array, towerEt: Float64Array, ghostEt: number): GhostedEvent {
  const cellCount = tables.towerTotal;
  const isGhost = new Uint8Array(cellCount).fill(1);
  const et = new Float64Array(cellCount).fill(ghostEt);
  for (let k = 0; k < towerIndex.length; k++) {
    isGhost[towerIndex[k]] = 0;
    et[towerIndex[k]] = towerEt[k];
  }
  const index = new Int32Array(cellCount);
  for (let t = 0; t < cellCount; t++) index[t] = t;
  return { towerIndex: index, towerEt: et, isGhost };
}

/**
 * Every final jet of a clustering with ghosts (section 6's order, no ptMin), pure-ghost jets
 * included. `jets` lists all constituents, real and ghost; the other arrays go row by row.
 */
export interface GhostedJets {
  jets: JetSet;
  /** each jet's index in the sequence (spec section 4): ties in a later ordering go by it */
  jetIndex: Int32Array;
  realCount: Int32Array;
  ghostCount: Int32Array;
  /** cells * cellArea, one multiplication */
  area: Float64Array;
  isGhost: Uint8Array;
}

/** Adds ghosts to the real towers and clusters them all with the reference (section 8). */
export function clusterWithGhosts(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  settings: ClusterSettings,
  ghostEt: number,
): GhostedJets {
  const ghosted = addGhosts(tables, towerIndex, towerEt, ghostEt);
  const jetIndex: number[] = [];
  const jets = clusterReference(tables, ghosted.towerIndex, ghosted.towerEt, { ...settings, ptMin: 0 }, { withTowers: true, jetIndex });
  const cellArea = cellAreaOf(tables.grid);
  const realCount = new Int32Array(jets.count);
  const ghostCount = new Int32Array(jets.count);
  const area = new Float64Array(jets.count);
  for (let n = 0; n < jets.count; n++) {
    const start = jets.towerStart[n];
    for (let k = start; k < start + jets.towerCount[n]; k++) {
      if (ghosted.isGhost[jets.towers[k]]) ghostCount[n]++;
      else realCount[n]++;
    }
    area[n] = jets.towerCount[n] * cellArea;
  }
  return { jets, jetIndex: Int32Array.from(jetIndex), realCount, ghostCount, area, isGhost: ghosted.isGhost };
}
