// Areas on ghost cells (clustering-spec.md section 8): the pileup chain's event as the full grid
// it becomes. The host writes only the real towers; the grid of ghosts is made here, already in
// increasing flat index, so neither the host's copy of every cell nor the input's sort
// (input.ts) is paid per event. The towers entering clustering, and their order, are exactly
// those clusterBatch would select from the ghost-filled grid, so the sequence is the same.

import { inIndex, inEt, inStart, evIndex, evEt, cellTotal, outJetStart, outNs, outClustered, outStatus,
  getF64, setF64, getI32, setI32 } from './layout';
import { clusterTowers, finalCount, jetCount } from './sequence';
import { writeJets } from './output';
import { STATUS_OK, STATUS_INDEX_OUTSIDE } from './shared-constants';

// @ts-ignore: decorator
@external("env", "clock.nowNs")
declare function nowNs(): f64;

/**
 * Clusters one event as a full grid: inIndex/inEt[0..inStart[1]) are its real towers, already
 * past the threshold (and SoftKiller), each cell at most once (the host checked), and every other
 * cell holds a ghost of `ghostEt`. Output as clusterBatch's for one event (status
 * STATUS_INDEX_OUTSIDE and no jets for an index outside the grid); returns the number of jets.
 */
export function clusterGhostGrid(ghostEt: f64, withTowers: i32): i32 {
  const began = nowNs();
  const cells = cellTotal;
  const real = getI32(inStart, 1);
  setI32(outJetStart, 0, 0);
  setI32(outJetStart, 1, 0);
  for (let k = 0; k < real; k++) {
    if (<u32>getI32(inIndex, k) >= <u32>cells) {
      setI32(outStatus, 0, STATUS_INDEX_OUTSIDE);
      setI32(outClustered, 0, 0);
      setF64(outNs, 0, nowNs() - began);
      return 0;
    }
  }
  for (let t = 0; t < cells; t++) {
    setI32(evIndex, t, t);
    setF64(evEt, t, ghostEt);
  }
  for (let k = 0; k < real; k++) setF64(evEt, getI32(inIndex, k), getF64(inEt, k));
  clusterTowers(cells);
  const jets = writeJets(cells, jetCount, finalCount, 0, 0, withTowers != 0);
  setI32(outJetStart, 1, jets);
  setI32(outStatus, 0, STATUS_OK);
  setI32(outClustered, 0, cells);
  setF64(outNs, 0, nowNs() - began);
  return jets;
}
