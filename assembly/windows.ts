// Which cells a scan visits: the window of cells that can hold a jet within a radius of
// (y, phi), as rows and per-row runs of columns, and the box, one run of padded columns for
// every row (layout.ts "padded").
//
// - window: rows whose centre lies within radius + widen of y (openWindow), and in each row the
//   columns within the circle's half-width at that row's nearest possible y, plus the row's drift
//   in phi (rowRuns). The φ range wraps at the seam and is cut into at most two contiguous runs,
//   A and B (B may be empty).
// - box: the window's rows and, in every row, the same run of padded columns, whose occupied
//   cells come from one unaligned load of the row's bits (no seam, no word loop); it does not
//   fit when longer than 57 columns or wider than the padding.
//
// Why module-level globals: opening a window or a box yields several bounds at once, and an
// AssemblyScript function returns one value. The scans read them in their loops, where a global
// costs what a local does; they are grouped under `window` and `box` and written only here.

import { etaCentre, rowDriftY, rowDriftPhi, etaBins, phiBins, padCols, padStride, bitStep } from './layout';
import { getF64 } from './layout';
import { reach, etaMin, invEtaPitch, invPhiPitch } from './settings';
import { BOUND_WIDENING, CELL_WIDENING } from './search-constants';

export namespace window {
  /** rows firstRow..lastRow */
  export let firstRow: i32 = 0;
  export let lastRow: i32 = -1;
  /** the current row's columns: runAFirst..runALast, then runBFirst..runBLast (B may be empty) */
  export let runAFirst: i32 = 0;
  export let runALast: i32 = -1;
  export let runBFirst: i32 = 0;
  export let runBLast: i32 = -1;
}

export namespace box {
  /** padded columns firstColumn..lastColumn in every row of the window */
  export let firstColumn: i32 = 0;
  export let lastColumn: i32 = -1;
  /** the packed-row scan: the mask of the box's width, the steps of that width, rows per word */
  export let mask: u64 = 0;
  export let steps: usize = 0;
  export let rowsPerWord: i32 = 1;
}

// the window's centre between openWindow() and the runs of its rows: y, and phi in columns
// from the first column's centre
let centreY: f64 = 0;
let centreV: f64 = 0;

/** the rows within radius + widen of y (widen: how far jets may sit from their cell centres in y) */
export function openWindow(y: f64, phi: f64, radius: f64, widen: f64): void {
  centreY = y;
  const u = (y - etaMin) * invEtaPitch - 0.5; // rows from the first row's centre
  centreV = phi * invPhiPitch - 0.5;
  const ry = (radius + widen) * invEtaPitch * (1 + BOUND_WIDENING) + CELL_WIDENING;
  const r0 = ceil<f64>(u - ry);
  const r1 = floor<f64>(u + ry);
  if (r0 == r0 && r1 == r1) {
    window.firstRow = <i32>max<f64>(r0, 0);
    window.lastRow = <i32>min<f64>(r1, <f64>(etaBins - 1));
  } else {
    window.firstRow = 0;
    window.lastRow = etaBins - 1;
  }
}

/** Sets the runs of row r; false when no cell of the row can hold a jet within the reach. */
export function rowRuns(r: i32): bool {
  let dy = abs<f64>(centreY - getF64(etaCentre, r)) - getF64(rowDriftY, r);
  if (dy > reach) return false;
  if (!(dy > 0)) dy = 0; // also a non-finite y: the whole row
  return columnRuns((sqrt<f64>(max<f64>(reach * reach - dy * dy, 0)) + getF64(rowDriftPhi, r)) * invPhiPitch);
}

/** Sets the runs of the columns within `halfColumns` columns of the window's phi. */
export function columnRuns(halfColumns: f64): bool {
  const half = halfColumns * (1 + BOUND_WIDENING) + CELL_WIDENING;
  const c0 = ceil<f64>(centreV - half);
  const c1 = floor<f64>(centreV + half);
  window.runBFirst = 0;
  window.runBLast = -1;
  if (!(c1 - c0 + 1 < <f64>phiBins)) {
    window.runAFirst = 0;
    window.runALast = phiBins - 1;
    return true;
  }
  if (c1 < c0) return false;
  const length = <i32>(c1 - c0) + 1;
  // c0 lies within one turn of the grid's columns, since the run is shorter than a turn
  let first = <i32>c0;
  if (first < 0) first += phiBins;
  else if (first >= phiBins) first -= phiBins;
  window.runAFirst = first;
  if (first + length <= phiBins) {
    window.runALast = first + length - 1;
  } else {
    window.runALast = phiBins - 1;
    window.runBLast = first + length - 1 - phiBins;
  }
  return true;
}

/** The padded columns within radius + widen of phi, as one run; false when it does not fit. */
function boxColumns(phi: f64, radius: f64, widen: f64): bool {
  const half = (radius + widen) * invPhiPitch * (1 + BOUND_WIDENING) + CELL_WIDENING;
  const v = phi * invPhiPitch - 0.5;
  const c0 = ceil<f64>(v - half);
  const c1 = floor<f64>(v + half);
  if (!(c1 - c0 + 1 < <f64>min<i32>(phiBins, 58))) return false; // also a non-finite phi
  box.firstColumn = 0;
  box.lastColumn = -1;
  if (c1 < c0) return true; // no column within reach
  const p0 = <i32>c0 + padCols;
  const p1 = <i32>c1 + padCols;
  if (p0 < 0 || p1 >= padStride) return false;
  box.firstColumn = p0;
  box.lastColumn = p1;
  return true;
}

/**
 * The box of padded rows within radius of (y, phi), widened by widenY and widenPhi for jets off
 * their centres: its rows (openWindow), its columns and the packing of its rows into words.
 * -1 when it does not fit in the padding, 0 when no column is within reach.
 */
export function openBox(y: f64, phi: f64, radius: f64, widenY: f64, widenPhi: f64): i32 {
  if (!boxColumns(phi, radius, widenPhi)) return -1;
  if (box.lastColumn < box.firstColumn) return 0;
  openWindow(y, phi, radius, widenY);
  const width = box.lastColumn - box.firstColumn + 1;
  box.mask = (<u64>1 << <u64>width) - 1;
  box.steps = bitStep + (<usize>(width << 6) << 2);
  box.rowsPerWord = rowsPerWord(width);
  return 1;
}

// @ts-ignore: decorator
@inline function rowsPerWord(width: i32): i32 {
  return 64 / width;
}
