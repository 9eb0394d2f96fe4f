// The step's new jet scans its window once: it finds its own neighbour and offers itself to each
// jet there, which takes it only when it is strictly nearer by that jet's key (ties go to the
// older jet, as the new one has the largest index). Wide jets (search.ts) are offered it too,
// wherever they are.

import { cellTotal, cellY, cellPhi, cellW, cellNnDR2, cellWide, cellJet, driftList, phiBins,
  padBits, padRows, padCols, padRowBytes, getF64, setF64, getI32 } from './layout';
import { invR2, reach2, reach, invPhiPitch, insideY, insidePhi } from './settings';
import { deltaR2 } from './kinematics';
import { driftY, driftPhi, driftCount, wideCount, setNeighbour } from './cells';
import { best } from './best';
import { window, openWindow, rowRuns, columnRuns, openBox } from './windows';
import { scanOpenBox, offerNewJet } from './box-scan';
import { LIST_MAX } from './search-constants';

/**
 * The occupied cells of a new jet's window, found from the rows' occupancy bits (the new jet's
 * own cell reads y = +Inf meanwhile), each with one rarely taken branch per question: is it the
 * new jet's best so far, does it take the new jet as its neighbour (each cell keeps its
 * neighbour's dR2, so that is one comparison). rectangle: the same columns in every row (jets at
 * their centres), else per-row runs with the rows' drift.
 * Measured: a 128-bit vector version (every cell, two a step, the per-lane best kept with
 * selects) ran as many instructions as the scalar loop over every cell and no faster; skipping
 * the empty cells by their bits is what paid.
 */
function scanWindow(ck: i32, y: f64, phi: f64, w: f64, rectangle: bool): void {
  for (let r = window.firstRow; r <= window.lastRow; r++) {
    if (!rectangle && !rowRuns(r)) continue;
    // the row's real columns in its padded bits start at padded column padCols
    const base = r * phiBins - padCols;
    const words = padBits + <usize>(r + padRows) * <usize>padRowBytes;
    for (let run = 0; run < 2; run++) {
      const from = (run == 0 ? window.runAFirst : window.runBFirst) + padCols;
      const to = (run == 0 ? window.runALast : window.runBLast) + padCols;
      for (let word = from >> 6; word <= to >> 6; word++) {
        let bits = load<u64>(words + (<usize>word << 3));
        const first = word << 6;
        if (from > first) bits &= ~<u64>0 << <u64>(from - first);
        if (to < first + 63) bits &= ~<u64>0 >> <u64>(first + 63 - to);
        while (bits != 0) {
          const q = base + first + <i32>ctz<u64>(bits);
          bits &= bits - 1;
          const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
          const key = (w * d) * invR2;
          if ((d <= reach2) & (key <= best.key)) best.offer(q, d, key);
          if ((d <= reach2) & (d < getF64(cellNnDR2, q))) offerNewJet(q, ck, d);
        }
      }
      if (window.runBLast < window.runBFirst) break;
    }
  }
}

/** The new jet's window as one box (windows.ts) for jets within (widenY, widenPhi) of their cell
 * centres; false when the box does not fit, and the caller then scans the window by rows. */
function scanRectangle(ck: i32, y: f64, phi: f64, w: f64, widenY: f64, widenPhi: f64): bool {
  const opened = openBox(y, phi, reach, widenY, widenPhi);
  if (opened <= 0) return opened == 0;
  scanOpenBox(ck, y, phi, w, true);
  return true;
}

// @ts-ignore: decorator
@inline function offerIfNearer(q: i32, ck: i32, d: f64): void {
  if ((d <= reach2) & (d < getF64(cellNnDR2, q))) offerNewJet(q, ck, d);
}

/** Every live cell, for a new jet whose neighbour must be sought among all jets. */
function scanAll(ck: i32, y: f64, phi: f64, w: f64): void {
  for (let q = 0; q < cellTotal; q++) {
    if (q == ck || getI32(cellJet, q) < 0) continue;
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    best.offer(q, d, (w * d) * invR2);
    if (d < getF64(cellNnDR2, q) && (d <= reach2 || getI32(cellWide, q) != 0)) offerNewJet(q, ck, d);
  }
}

/**
 * The new jet in cell ck: its own neighbour, and its offers to the jets around it (and to every
 * wide jet). The tree is updated for the jets that take it; ck's own leaf is the caller's.
 */
export function scanNewJet(ck: i32): void {
  const y = getF64(cellY, ck);
  const phi = getF64(cellPhi, ck);
  const w = getF64(cellW, ck);
  const wide = getI32(cellWide, ck) != 0;
  best.reset();
  if (wide) {
    scanAll(ck, y, phi, w);
  } else {
    setF64(cellY, ck, Infinity); // not its own neighbour
    if (driftCount <= LIST_MAX) {
      // jets within half a cell of their centres: one rectangle of rows and columns widened by
      // that; the listed ones directly
      const widenY = min<f64>(driftY, insideY);
      const widenPhi = min<f64>(driftPhi, insidePhi);
      if (!scanRectangle(ck, y, phi, w, widenY, widenPhi)) {
        openWindow(y, phi, reach, widenY);
        if (columnRuns((reach + widenPhi) * invPhiPitch)) scanWindow(ck, y, phi, w, true);
      }
      for (let k = 0; k < driftCount; k++) {
        const q = getI32(driftList, k);
        if (q == ck) continue;
        const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
        if (d <= reach2) best.offer(q, d, (w * d) * invR2);
        offerIfNearer(q, ck, d);
      }
    } else {
      openWindow(y, phi, reach, driftY);
      scanWindow(ck, y, phi, w, false);
    }
    setF64(cellY, ck, y);
  }
  const bc = best.cell;
  const bd = best.dR2;
  const bk = best.key;
  if (wideCount > (wide ? 1 : 0)) {
    for (let q = 0; q < cellTotal; q++) {
      if (q == ck || getI32(cellWide, q) == 0) continue;
      const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
      if (d < getF64(cellNnDR2, q)) offerNewJet(q, ck, d);
    }
  }
  setNeighbour(ck, bc, bd, bk);
}
