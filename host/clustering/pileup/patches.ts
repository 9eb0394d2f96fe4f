// The grid cut into patches of towers, and the spec's median (clustering-spec.md part two,
// sections 9-10). Both the patch estimate of ρ and SoftKiller look at the event patch by patch
// and take a median over patches, so the two share this module.

import type { Grid, PatchSize } from '../../types.js';

/**
 * Patches of `etaRows` by `phiColumns` towers: tower (ieta, iphi) lies in patch
 * (floor(ieta / etaRows), floor(iphi / phiColumns)), numbered row by row like towers; the last
 * patch in each direction may be smaller.
 */
export interface PatchLayout {
  patchRows: number;
  patchColumns: number;
  patchCount: number;
  /** patch number of each grid cell, by flat tower index */
  patchOfTower: Int32Array;
  /** number of grid cells in each patch */
  cellsInPatch: Int32Array;
}

export function makePatchLayout(grid: Grid, size: PatchSize): PatchLayout {
  const { etaBins, phiBins } = grid;
  const patchRows = Math.ceil(etaBins / size.etaRows);
  const patchColumns = Math.ceil(phiBins / size.phiColumns);
  const patchCount = patchRows * patchColumns;
  const patchOfTower = new Int32Array(etaBins * phiBins);
  const cellsInPatch = new Int32Array(patchCount);
  for (let ieta = 0; ieta < etaBins; ieta++) {
    for (let iphi = 0; iphi < phiBins; iphi++) {
      const patch = Math.floor(ieta / size.etaRows) * patchColumns + Math.floor(iphi / size.phiColumns);
      patchOfTower[ieta * phiBins + iphi] = patch;
      cellsInPatch[patch]++;
    }
  }
  return { patchRows, patchColumns, patchCount, patchOfTower, cellsInPatch };
}

/** the area of one grid cell, in the spec's bracketing (part two, notation) */
export function cellAreaOf(grid: Grid): number {
  const cellEta = (grid.etaMax - grid.etaMin) / grid.etaBins;
  const cellPhi = (2 * Math.PI) / grid.phiBins;
  return cellEta * cellPhi;
}

/**
 * The spec's median: sorted increasing, the middle element for an odd count, 0.5 * (a + b) of
 * the two middle ones for an even count, 0 for none. The values are not changed (a copy is
 * sorted); they must not hold NaN.
 */
export function medianOf(values: ArrayLike<number>): number {
  const n = values.length;
  if (n === 0) return 0;
  const sorted = Float64Array.from(values).sort();
  if (n % 2 === 1) return sorted[(n - 1) / 2];
  return 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
}
