// SoftKiller (clustering-spec.md section 10, arXiv:1407.0408): an event-level cut that removes
// the soft towers of pileup before clustering. The cut is the median over patches of each
// patch's hardest tower, so that about half of the patches keep no tower at all: the event's
// own pileup level sets it, with no tuning per pileup condition.

import type { Grid, PatchSize } from '../../types.js';
import { makePatchLayout, medianOf } from './patches.js';

export interface SoftKillResult {
  /** the towers kept, in the input's order */
  towerIndex: Int32Array;
  towerEt: Float64Array;
  /** GeV; towers below it were removed, towers equal to it kept */
  etCut: number;
  /** towers removed */
  killed: number;
}

/**
 * SoftKiller on one event's towers after the threshold (all et > 0, flat indices on the grid,
 * any order; in practice increasing flat index, which is kept).
 */
export function softKill(grid: Grid, towerIndex: Int32Array, towerEt: Float64Array, size: PatchSize): SoftKillResult {
  const layout = makePatchLayout(grid, size);

  // the hardest tower of each patch; 0 for a patch without towers
  const patchMaximum = new Float64Array(layout.patchCount);
  for (let k = 0; k < towerIndex.length; k++) {
    const patch = layout.patchOfTower[towerIndex[k]];
    if (towerEt[k] > patchMaximum[patch]) patchMaximum[patch] = towerEt[k];
  }
  const etCut = medianOf(patchMaximum);

  const keptIndex: number[] = [];
  const keptEt: number[] = [];
  for (let k = 0; k < towerIndex.length; k++) {
    if (towerEt[k] < etCut) continue;
    keptIndex.push(towerIndex[k]);
    keptEt.push(towerEt[k]);
  }
  return {
    towerIndex: Int32Array.from(keptIndex),
    towerEt: Float64Array.from(keptEt),
    etCut,
    killed: towerIndex.length - keptIndex.length,
  };
}
