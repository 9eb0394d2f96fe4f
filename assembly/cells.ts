// One cell per tower of the grid; a cell holds at most one jet. At the start every tower sits in
// its own cell; a merged jet takes the cell that contains its (y, phi) when that cell is free,
// else the nearer of its parents' cells. How far jets sit from their cell centres is tracked
// (driftY, driftPhi: the largest offsets this event; rowDriftY, rowDriftPhi: the same per grid
// row), and the live jets outside their own cell's area are listed (driftList), so searches stay
// exact: while that list is short, searches widen their windows by half a cell (settings.ts
// insideY, insidePhi), which finds every other jet, and look at the listed ones directly.
//
// Per cell c (see layout.ts): cellY cellPhi cellW (the jet's weight w), cellNnDR2 cellNnKey (the
// jet's nearest neighbour by the key of clustering-spec.md section 4, its dR2 and (w*dR2)*invR2;
// +Inf when none lies within the reach), cellJet, cellNn (the neighbour's cell or -1), cellWide
// (1: weight outside the safe range, neighbour sought among all jets).
// Who points at whom: the cells whose neighbour is cell q form a doubly linked list
// pointHead[q] -> pointNext -> ... (pointPrev links back), so removing a jet finds at once the
// jets that lost their neighbour.

import { cellTotal, cellY, cellPhi, cellW, cellNnDR2, cellNnKey, cellJet, cellNn, cellWide,
  pointHead, pointNext, pointPrev, etaCentre, phiCentre, etaBins, phiBins, jetY, jetPhi, jetKt2,
  rowDriftY, rowDriftPhi, cellRow, cellCol, driftList, driftSlot, cellCopyStep,
  padRows, padCols, padStride, padTotal, padY, padPhi, padCell, cellPad, padBits, padRowBytes, bitStep, cellSlot, slotCell,
  getF64, setF64, getI32, setI32 } from './layout';
import { invR2, etaMin, invEtaPitch, invPhiPitch, insideY, insidePhi, PI, TWO_PI, BEAM, beamsOff } from './settings';
import { weightOf, needsWideSearch } from './kinematics';
import { setCandidate, setEmptyCandidate } from './tournament';

export let wideCount: i32 = 0;
/** cells holding a jet */
export let liveCells: i32 = 0;
export let driftY: f64 = 0;
export let driftPhi: f64 = 0;
export let driftNorm: f64 = 0;
/** live jets off their cell centre: driftList[0..driftCount), driftSlot[c] = position or -1 */
export let driftCount: i32 = 0;

/** Called once per engine. */
export function initCells(): void {
  for (let c = 0; c < cellTotal; c++) {
    setI32(cellJet, c, -1);
    setF64(cellY, c, Infinity);
    setF64(cellPhi, c, 0);
    setI32(cellNn, c, -1);
    setI32(pointHead, c, -1);
    setI32(cellWide, c, 0);
    const row = c / phiBins;
    setI32(cellRow, c, row);
    setI32(cellCol, c, c - row * phiBins);
    setI32(driftSlot, c, -1);
  }
}

/** Called once per engine, after reservePadding(): every padded cell empty, the maps set. */
export function initPadding(): void {
  for (let q = 0; q < padTotal; q++) {
    setF64(padY, q, Infinity);
    setF64(padPhi, q, 0);
    const row = q / padStride - padRows;
    let col = (q % padStride - padCols) % phiBins;
    if (col < 0) col += phiBins;
    setI32(padCell, q, row >= 0 && row < etaBins ? row * phiBins + col : -1);
  }
  for (let c = 0; c < cellTotal; c++) {
    const col = getI32(cellCol, c);
    setI32(cellPad, c, (getI32(cellRow, c) + padRows) * padStride + col + padCols);
    setI32(cellCopyStep, c, col < padCols ? phiBins : col >= phiBins - padCols ? -phiBins : 0);
  }
  memory.fill(padBits, 0, <usize>(etaBins + 2 * padRows) * <usize>padRowBytes);
  for (let width = 1; width < 58; width++) {
    for (let k = 0; k < 64; k++) setI32(bitStep, width * 64 + k, (k / width) * padStride + k % width);
  }
}

// @ts-ignore: decorator
@inline function setPaddedBit(row: usize, column: i32, on: bool): void {
  const word = row + (<usize>(column >> 6) << 3);
  const bit = <u64>1 << <u64>(column & 63);
  store<u64>(word, on ? load<u64>(word) | bit : load<u64>(word) & ~bit);
}

/** Cell c's y, phi and occupancy into its padded cell and its copy past the row's other end
 * (a cell has at most one, since padCols <= phiBins / 2; a cell without one writes its own cell
 * twice, which spares a branch). */
function writePadded(c: i32, y: f64, phi: f64, on: bool): void {
  const q = getI32(cellPad, c);
  const step = getI32(cellCopyStep, c);
  const column = getI32(cellCol, c) + padCols;
  const bits = padBits + <usize>(getI32(cellRow, c) + padRows) * <usize>padRowBytes;
  setF64(padY, q, y);
  setF64(padPhi, q, phi);
  setF64(padY, q + step, y);
  setF64(padPhi, q + step, phi);
  setPaddedBit(bits, column, on);
  setPaddedBit(bits, column + step, on);
}

export function resetDrift(): void {
  driftY = 0;
  driftPhi = 0;
  driftNorm = 0;
  driftCount = 0;
  wideCount = 0;
  liveCells = 0;
  memory.fill(rowDriftY, 0, <usize>etaBins << 3);
  memory.fill(rowDriftPhi, 0, <usize>etaBins << 3);
}

// @ts-ignore: decorator
@inline export function centreOffsetY(c: i32, y: f64): f64 {
  return abs<f64>(y - getF64(etaCentre, getI32(cellRow, c)));
}

// @ts-ignore: decorator
@inline export function centreOffsetPhi(c: i32, phi: f64): f64 {
  const d = abs<f64>(phi - getF64(phiCentre, getI32(cellCol, c)));
  return select<f64>(TWO_PI - d, d, d > PI);
}

// row and column numbers within this converting to i32 safely (below 2^31, about 2.1e9)
// @ts-ignore: decorator
@inline const CONVERTIBLE_LIMIT: f64 = 1e9;

/** The cell whose area contains (y, phi), clamped to the grid; -1 for a non-finite position. */
export function containingCell(y: f64, phi: f64): i32 {
  // any cell would do (drift is tracked); the containing one keeps drift small
  const u = floor<f64>((y - etaMin) * invEtaPitch);
  const v = floor<f64>(phi * invPhiPitch);
  if (!(u == u) || !(v == v) || abs<f64>(u) > CONVERTIBLE_LIMIT || abs<f64>(v) > CONVERTIBLE_LIMIT) return -1;
  const row = min<i32>(max<i32>(<i32>u, 0), etaBins - 1);
  const col = min<i32>(max<i32>(<i32>v, 0), phiBins - 1);
  return row * phiBins + col;
}

/**
 * The free cell for a jet at (y, phi): the containing cell, else the free one of its eight
 * neighbours nearest to the jet, else `fallback`. Any cell would be exact; near ones keep the
 * drift, and so the searches, small.
 */
export function freeCellNear(y: f64, phi: f64, fallback: i32): i32 {
  const c = containingCell(y, phi);
  if (c < 0) return fallback;
  if (getI32(cellJet, c) < 0) return c;
  const row = getI32(cellRow, c);
  const col = getI32(cellCol, c);
  let best = fallback;
  let bestOffset = centreOffsetY(fallback, y) + centreOffsetPhi(fallback, phi);
  for (let dr = -1; dr <= 1; dr++) {
    const r = row + dr;
    if (r < 0 || r >= etaBins) continue;
    for (let dc = -1; dc <= 1; dc++) {
      let cc = col + dc;
      if (cc < 0) cc += phiBins;
      else if (cc >= phiBins) cc -= phiBins;
      const q = r * phiBins + cc;
      if (getI32(cellJet, q) >= 0) continue;
      const offset = centreOffsetY(q, y) + centreOffsetPhi(q, phi);
      if (offset < bestOffset) {
        best = q;
        bestOffset = offset;
      }
    }
  }
  return best;
}

/** Slot s (the tournament's leaf) belongs to cell c from now on. */
export function assignSlot(c: i32, s: i32): void {
  setI32(cellSlot, c, s);
  setI32(slotCell, s, c);
}

/** Jet `jet` moves into the empty cell c, with no neighbour yet (its slot is the caller's). */
export function placeJet(c: i32, jet: i32): void {
  const y = getF64(jetY, jet);
  const phi = getF64(jetPhi, jet);
  const w = weightOf(getF64(jetKt2, jet));
  setI32(cellJet, c, jet);
  setF64(cellY, c, y);
  setF64(cellPhi, c, phi);
  writePadded(c, y, phi, true);
  setF64(cellW, c, w);
  setI32(cellNn, c, -1);
  setF64(cellNnDR2, c, Infinity);
  setF64(cellNnKey, c, Infinity);
  setI32(pointHead, c, -1);
  const wide = needsWideSearch(w) ? 1 : 0;
  setI32(cellWide, c, wide);
  wideCount += wide;
  liveCells++;
  const dy = centreOffsetY(c, y);
  const dphi = centreOffsetPhi(c, phi);
  if (dy > 0 || dphi > 0) {
    if (dy > insideY || dphi > insidePhi) {
      setI32(driftSlot, c, driftCount);
      setI32(driftList, driftCount++, c);
    }
    const row = getI32(cellRow, c);
    if (dy > getF64(rowDriftY, row)) setF64(rowDriftY, row, dy);
    if (dphi > getF64(rowDriftPhi, row)) setF64(rowDriftPhi, row, dphi);
    if (dy > driftY || dphi > driftPhi) {
      driftY = max<f64>(driftY, dy);
      driftPhi = max<f64>(driftPhi, dphi);
      driftNorm = sqrt<f64>(driftY * driftY + driftPhi * driftPhi);
    }
  }
}

/** Cell c becomes empty (its slot's candidate too); its lists must already be detached. */
export function clearCell(c: i32): void {
  const slot = getI32(driftSlot, c);
  if (slot >= 0) {
    const last = getI32(driftList, --driftCount);
    setI32(driftList, slot, last);
    setI32(driftSlot, last, slot);
    setI32(driftSlot, c, -1);
  }
  wideCount -= getI32(cellWide, c);
  liveCells--;
  setI32(cellWide, c, 0);
  setI32(cellJet, c, -1);
  setF64(cellY, c, Infinity);
  setF64(cellPhi, c, 0);
  writePadded(c, Infinity, 0, false);
  setEmptyCandidate(getI32(cellSlot, c));
}

/** Takes c out of the list of the cell it points at. */
export function unlink(c: i32): void {
  const q = getI32(cellNn, c);
  if (q < 0) return;
  const prev = getI32(pointPrev, c);
  const next = getI32(pointNext, c);
  if (prev >= 0) setI32(pointNext, prev, next);
  else setI32(pointHead, q, next);
  if (next >= 0) setI32(pointPrev, next, prev);
  setI32(cellNn, c, -1);
}

/**
 * Moves every cell pointing at q onto the redo stack (from `count` on), forgetting their
 * neighbour; returns the new stack size.
 */
export function detachPointers(q: i32, stack: usize, count: i32): i32 {
  let c = getI32(pointHead, q);
  while (c >= 0) {
    const next = getI32(pointNext, c);
    setI32(cellNn, c, -1);
    // -Inf until its search from scratch: a new jet's offer (d < cellNnDR2) would be redone anyway.
    // cellNnKey keeps the lost neighbour's key for the search's shortcut (sequence.ts)
    setF64(cellNnDR2, c, -Infinity);
    setI32(stack, count++, c);
    c = next;
  }
  setI32(pointHead, q, -1);
  return count;
}

/** Cell c's jet now has the neighbour in cell q (or none, q = -1); its candidate follows. */
export function setNeighbour(c: i32, q: i32, dR2: f64, key: f64): void {
  unlink(c);
  if (q >= 0) {
    setI32(cellNn, c, q);
    const head = getI32(pointHead, q);
    setI32(pointPrev, c, -1);
    setI32(pointNext, c, head);
    if (head >= 0) setI32(pointPrev, head, c);
    setI32(pointHead, q, c);
    setF64(cellNnDR2, c, dR2);
    setF64(cellNnKey, c, key);
  } else {
    setF64(cellNnDR2, c, Infinity);
    setF64(cellNnKey, c, Infinity);
  }
  refreshCandidate(c);
}

/** Cell c's candidate: the smaller of its beam and its pair with its neighbour (spec section 4). */
export function refreshCandidate(c: i32): void {
  const w = getF64(cellW, c);
  const beam = select<f64>(Infinity, w, beamsOff);
  const i = getI32(cellJet, c);
  const q = getI32(cellNn, c);
  if (q >= 0) {
    const j = getI32(cellJet, q);
    const d = (min<f64>(w, getF64(cellW, q)) * getF64(cellNnDR2, c)) * invR2;
    // on equal measures the pair comes first: its smaller index is <= i and its larger < BEAM
    if (d <= beam) {
      setCandidate(getI32(cellSlot, c), d, min<i32>(i, j), max<i32>(i, j));
      return;
    }
  }
  setCandidate(getI32(cellSlot, c), beam, i, BEAM);
}
