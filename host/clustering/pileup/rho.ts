// The background density ρ, GeV per unit of eta-phi area (clustering-spec.md section 9): the
// median transverse energy density of the event's soft background (arXiv:0707.1378). A median
// rather than a mean, so that the few hard jets of an event barely move it.

import type { GridTables } from '../grid.js';
import type { Grid, PatchSize } from '../../types.js';
import { clusterWithGhosts } from './ghosts.js';
import { cellAreaOf, makePatchLayout, medianOf } from './patches.js';

/**
 * ρ from patches: each patch's summed et (real towers, added in increasing flat index) over its
 * area (cells * cellArea); the median over all patches, empty ones included.
 * Towers must be in increasing flat index (they are after the threshold and SoftKiller).
 */
export function rhoFromPatches(grid: Grid, towerIndex: Int32Array, towerEt: Float64Array, size: PatchSize): number {
  const layout = makePatchLayout(grid, size);
  const cellArea = cellAreaOf(grid);
  const patchSum = new Float64Array(layout.patchCount);
  for (let k = 0; k < towerIndex.length; k++) patchSum[layout.patchOfTower[towerIndex[k]]] += towerEt[k];
  const density = new Float64Array(layout.patchCount);
  for (let patch = 0; patch < layout.patchCount; patch++) {
    const area = layout.cellsInPatch[patch] * cellArea;
    density[patch] = patchSum[patch] / area;
  }
  return medianOf(density);
}

/**
 * ρ from kt jets: the real towers clustered again with kt (p = 1, R = `radius`, E-scheme) and
 * ghosts of `ghostEt`; of the final jets, pure-ghost ones included, those with
 * etaMin + R < y < etaMax - R, less the two hardest (the event's hard jets, common practice);
 * the median of pt / area of the rest.
 */
export function rhoFromKtJets(tables: GridTables, towerIndex: Int32Array, towerEt: Float64Array, radius: number, ghostEt: number): number {
  const { etaMin, etaMax } = tables.grid;
  const clustered = clusterWithGhosts(tables, towerIndex, towerEt, { p: 1, radius, ptMin: 0, threshold: 0, recombination: 'e' }, ghostEt);
  const { jets, area } = clustered;
  // jets come in decreasing pt, ties to the smaller index: the first two inside are the hardest
  const densities: number[] = [];
  let dropped = 0;
  for (let n = 0; n < jets.count; n++) {
    const y = jets.rapidity[n];
    if (!(etaMin + radius < y && y < etaMax - radius)) continue;
    if (dropped < 2) {
      dropped++;
      continue;
    }
    densities.push(jets.pt[n] / area[n]);
  }
  return medianOf(densities);
}
