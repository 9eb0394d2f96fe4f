// The scan of an open box (windows.ts openBox) over the padded rows' occupancy bits, shared by
// the search from scratch (search.ts) and the new jet's scan (new-jet.ts), and the new jet's
// offer to a jet it passes.

import { cellY, cellPhi, cellW, cellNnDR2, cellNnKey, cellSlot, padCell, padBits, padRows,
  padRowBytes, padStride, getF64, getI32 } from './layout';
import { invR2, reach2 } from './settings';
import { deltaR2 } from './kinematics';
import { setNeighbour } from './cells';
import { updateTree } from './tournament';
import { best } from './best';
import { window, box } from './windows';

/** The new jet in cell ck, at dR2 d from cell q's jet, becomes q's neighbour when strictly nearer
 * by q's own key (ties go to the older jet, as the new one has the largest index). */
// @ts-ignore: decorator
@inline export function offerNewJet(q: i32, ck: i32, d: f64): void {
  const key = (getF64(cellW, q) * d) * invR2;
  if (key < getF64(cellNnKey, q)) {
    setNeighbour(q, ck, d, key);
    updateTree(getI32(cellSlot, q));
  }
}

/**
 * The occupancy of rows r..last of the box's columns (p0, width wide) packed into one word, row
 * after row: one loop over the set bits then covers several rows, so its exit (a branch no
 * predictor learns) is taken once per word, not once per row.
 */
// @ts-ignore: decorator
@inline function packedRows(r: i32, last: i32, p0: i32, width: i32, mask: u64): u64 {
  const bitsBase = padBits + <usize>(p0 >> 3);
  const rowBytes = <usize>padRowBytes;
  const shift = <u64>(p0 & 7);
  let bits: u64 = 0;
  let at: u64 = 0;
  for (let row = r; row <= last; row++) {
    bits |= ((load<u64>(bitsBase + <usize>(row + padRows) * rowBytes) >> shift) & mask) << at;
    at += <u64>width;
  }
  return bits;
}

/**
 * The occupied cells of the open box, several rows' bits packed into one word: each a candidate
 * for cell c's neighbour, and with `offers` (c holds the step's new jet, whose own cell reads
 * y = +Inf meanwhile) offered the new jet when it is nearer than their own neighbour.
 */
export function scanOpenBox(c: i32, y: f64, phi: f64, w: f64, offers: bool): void {
  const p0 = box.firstColumn;
  const width = box.lastColumn - p0 + 1;
  const mask = box.mask;
  const steps = box.steps;
  const group = box.rowsPerWord;
  const stride = padStride;
  const row1 = window.lastRow;
  for (let r = window.firstRow; r <= row1; r += group) {
    let bits = packedRows(r, min<i32>(r + group - 1, row1), p0, width, mask);
    const start = (r + padRows) * stride + p0;
    while (bits != 0) {
      const q = getI32(padCell, start + getI32(steps, <i32>ctz<u64>(bits)));
      bits &= bits - 1;
      const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
      const key = (w * d) * invR2;
      if ((d <= reach2) & (key <= best.key) & (q != c)) best.offer(q, d, key);
      if (offers && (d <= reach2) & (d < getF64(cellNnDR2, q))) offerNewJet(q, c, d);
    }
  }
}
