// Nearest-neighbour searches over the cells (clustering-spec.md section 4: nn(i) is the jet j
// with the smallest key ((w_i * dR2_ij) * invR2, j), jet i's own weight). Only jets within the
// reach (dR2 <= R*R*(1 + 1e-9)) are sought: a farther pair always loses to a beam, so it can
// never be the step's choice. Jets with a weight outside the safe range ("wide") look at all jets.
//
// Three ways to search, all exact:
// - ordered: cell offsets (offDr, offDc) sorted by the distance between cell centres (offDist,
//   a lower bound), visited nearest first; stops once no farther cell can hold a jet as close
//   as the best so far, allowing for how far jets sit from their cell centres (drift). The walk
//   reads the padded rows (layout.ts), where an offset is one flat step (offStep).
// - window: row by row, the cells whose centre lies within reach + that row's drift of the jet
//   (a circle, not a square); the φ range wraps at the seam and is cut into at most two
//   contiguous runs, whose occupied cells are found from the padded rows' occupancy bits.
// - all cells (wide jets).
// A new jet scans its window once: it finds its own neighbour and offers itself to each jet
// there, which takes it only when it is strictly nearer by that jet's key (ties go to the older
// jet, as the new one has the largest index).

import { cellTotal, cellY, cellPhi, cellW, cellNnDR2, cellNnKey, cellJet, cellWide, cellRow, cellCol, etaCentre,
  rowDriftY, rowDriftPhi, driftList,
  etaBins, phiBins, offDr, offDc, offDist, offPerm, offScratch, offTmpI, offTmpF, OFFSET_LIMIT,
  cellSlot, bitStep, offStep, padY, padPhi, padCell, cellPad, padStride, padRows, padCols, padBits, padRowBytes, reservePadding,
  getF64, setF64, getI32, setI32 } from './layout';
import { invR2, reach2, reach, etaMin, etaPitch, phiPitch, invEtaPitch, invPhiPitch, insideY, insidePhi, insideNorm, BEAM } from './settings';
import { deltaR2 } from './kinematics';
import { driftY, driftPhi, driftNorm, driftCount, wideCount, liveCells, centreOffsetY, centreOffsetPhi, setNeighbour } from './cells';
import { updateTree } from './tournament';
import { sortPermutation } from './sort';

// the listed jets are looked at directly while at most this many, else windows and bounds widen
// by the drift. Measured: without the list anti-kt at 3200 towers took 4.9 ms, with it 2.9 ms;
// 12, 32 or 64 made no measurable difference for windows; searches from scratch did better
// widening once more than about 8 are listed (959 against 1096 µs, anti-kt at 850 towers)
// @ts-ignore: decorator
@inline const LIST_MAX: i32 = 32;
// @ts-ignore: decorator
@inline const LIST_MAX_SEARCH: i32 = 8;

/** the cell of the step's new jet while the jets that lost their neighbour search again, else -1 */
export let seedCell: i32 = -1;

export function setSeedCell(c: i32): void {
  seedCell = c;
}

let offCount: i32 = 0;
/** the typical nearest-neighbour distance on a full grid (a cell pitch, a little more) */
let nearGuess: f64 = 0;
/** every offset whose centre distance is at most this is in the list */
let offReach: f64 = 0;

let bestCell: i32 = -1;
let bestJet: i32 = BEAM;
let bestDR2: f64 = Infinity;
let bestKey: f64 = Infinity;

// the current window: rows winRow0..winRow1, columns runA0..runA1 and runB0..runB1 (B may be empty)
let winRow0: i32 = 0;
let winRow1: i32 = -1;
let runA0: i32 = 0;
let runA1: i32 = -1;
let runB0: i32 = 0;
let runB1: i32 = -1;

/** Called once per engine, after configure(); reserves the padded rows the offsets reach (false
 * when memory cannot grow). */
export function buildOffsets(): bool {
  const pitch = max<f64>(etaPitch, phiPitch);
  const dcLow = -((phiBins - 1) >> 1);
  const dcHigh = phiBins >> 1;
  let limit = reach + 3 * pitch;
  let rows = 0;
  let count = 0;
  for (;;) {
    rows = <i32>min<f64>(<f64>(etaBins - 1), ceil<f64>(limit / etaPitch));
    count = 0;
    for (let dr = -rows; dr <= rows; dr++) {
      for (let dc = dcLow; dc <= dcHigh; dc++) {
        if (dr == 0 && dc == 0) continue;
        if (centreDistance(dr, dc) <= limit) count++;
      }
    }
    if (count <= OFFSET_LIMIT) break;
    limit *= 0.75;
  }
  const complete = limit / etaPitch >= <f64>(etaBins - 1) && limit / phiPitch >= <f64>(phiBins >> 1);
  offReach = complete ? Infinity : limit;
  let n = 0;
  for (let dr = -rows; dr <= rows; dr++) {
    for (let dc = dcLow; dc <= dcHigh; dc++) {
      if (dr == 0 && dc == 0) continue;
      const dist = centreDistance(dr, dc);
      if (dist > limit) continue;
      setI32(offTmpI, n, (dr << 16) | (dc & 0xffff));
      setF64(offTmpF, n, dist);
      setI32(offPerm, n, n);
      n++;
    }
  }
  sortPermutation(offPerm, offScratch, n, offTmpF, 0);
  // centres can sit a few ulp off the ideal lattice: shave the bound a little
  const ulpScale = 1e-15 * (abs<f64>(etaMin) + abs<f64>(etaMin + etaPitch * <f64>etaBins) + 8);
  let rowReach = 0;
  let colReach = 0;
  for (let o = 0; o < n; o++) {
    const from = getI32(offPerm, o);
    const packed = getI32(offTmpI, from);
    const dr = packed >> 16;
    const dc = <i32>(<i16>(packed & 0xffff));
    setI32(offDr, o, dr);
    setI32(offDc, o, dc);
    setF64(offDist, o, getF64(offTmpF, from) * (1 - 1e-9) - 4 * ulpScale);
    rowReach = max<i32>(rowReach, abs<i32>(dr));
    colReach = max<i32>(colReach, abs<i32>(dc));
  }
  offCount = n;
  nearGuess = 1.2 * max<f64>(etaPitch, phiPitch);
  if (!reservePadding(rowReach, colReach)) return false;
  for (let o = 0; o < n; o++) setI32(offStep, o, getI32(offDr, o) * padStride + getI32(offDc, o));
  return true;
}

function centreDistance(dr: i32, dc: i32): f64 {
  const adc = abs<i32>(dc);
  const ay = <f64>abs<i32>(dr) * etaPitch;
  const ap = <f64>min<i32>(adc, phiBins - adc) * phiPitch;
  return sqrt<f64>(ay * ay + ap * ap);
}

// @ts-ignore: decorator
@inline function resetBest(): void {
  bestCell = -1;
  bestJet = BEAM;
  bestDR2 = Infinity;
  bestKey = Infinity;
}

// @ts-ignore: decorator
@inline function offerBest(q: i32, d: f64, key: f64): bool {
  const j = getI32(cellJet, q);
  if (key < bestKey || (key == bestKey && j < bestJet)) {
    bestCell = q;
    bestJet = j;
    bestDR2 = d;
    bestKey = key;
    return true;
  }
  return false;
}

/** The listed jets (outside their cells' areas) as candidates for cell c's neighbour. */
// @ts-ignore: decorator
@inline function offerListed(c: i32, y: f64, phi: f64, w: f64): void {
  for (let k = 0; k < driftCount; k++) {
    const q = getI32(driftList, k);
    if (q == c) continue;
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    if (d <= reach2) offerBest(q, d, (w * d) * invR2);
  }
}

/** Nearest first over the offsets; false when the list ran out before the search could stop. */
function searchOrdered(c: i32): bool {
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  const dyq = centreOffsetY(c, y);
  const dpq = centreOffsetPhi(c, phi);
  let limit = reach;
  let others = driftNorm;
  if (driftCount <= LIST_MAX_SEARCH) {
    // the jets outside their cells' areas directly; the walk below then only has to be exact
    // for jets within half a cell of their centres
    others = min<f64>(driftNorm, insideNorm);
    offerListed(c, y, phi, w);
    if (bestCell >= 0) limit = min<f64>(limit, sqrt<f64>(bestDR2) * (1 + 1e-8));
  } else if (seedCell >= 0 && seedCell != c) {
    // the new jet of this step is the likely neighbour: offered first, it bounds the walk at once
    const d = deltaR2(y, phi, getF64(cellY, seedCell), getF64(cellPhi, seedCell));
    if (d <= reach2) {
      offerBest(seedCell, d, (w * d) * invR2);
      limit = min<f64>(limit, sqrt<f64>(d) * (1 + 1e-8));
    }
  }
  const slack = sqrt<f64>(dyq * dyq + dpq * dpq) + others + 1e-12;
  const n = offCount;
  const from = getI32(cellPad, c);
  // bases and settings in locals: the loop reads no global
  const steps = offStep;
  const dists = offDist;
  const ys = padY;
  const phis = padPhi;
  const r2 = reach2;
  const scale = invR2;
  let bound = bestKey;
  for (let o = 0; o < n; o++) {
    if (getF64(dists, o) - slack > limit) return true;
    // one flat step in the padded rows: cells beyond the grid's edges and empty cells read
    // y = +Inf, so d and key are +Inf and the one branch below, rarely taken, is not
    const q = from + getI32(steps, o);
    const d = deltaR2(y, phi, getF64(ys, q), getF64(phis, q));
    const key = (w * d) * scale;
    if ((d <= r2) & (key <= bound)) {
      if (offerBest(getI32(padCell, q), d, key)) limit = min<f64>(limit, sqrt<f64>(d) * (1 + 1e-8));
      bound = bestKey;
    }
  }
  return offReach - slack > limit;
}

/**
 * The window of cells that can hold a jet within the reach of (y, phi): rows whose centre lies
 * within reach + that row's drift, and in each row the columns within the circle's half-width
 * at that row's nearest possible y, plus the row's drift in phi. scanWindow() walks it.
 */
let winY: f64 = 0;
let winPhi: f64 = 0;
let winU: f64 = 0;
let winV: f64 = 0;

/** the rows within radius + widen of y (widen: how far jets may sit from their cell centres in y) */
function openWindow(y: f64, phi: f64, radius: f64, widen: f64): void {
  winY = y;
  winPhi = phi;
  winU = (y - etaMin) * invEtaPitch - 0.5;
  winV = phi * invPhiPitch - 0.5;
  const ry = (radius + widen) * invEtaPitch * (1 + 1e-9) + 1e-9;
  const r0 = ceil<f64>(winU - ry);
  const r1 = floor<f64>(winU + ry);
  if (r0 == r0 && r1 == r1) {
    winRow0 = <i32>max<f64>(r0, 0);
    winRow1 = <i32>min<f64>(r1, <f64>(etaBins - 1));
  } else {
    winRow0 = 0;
    winRow1 = etaBins - 1;
  }
}

/** Sets the runs of row r; false when no cell of the row can hold a jet within the reach. */
function rowRuns(r: i32): bool {
  let dy = abs<f64>(winY - getF64(etaCentre, r)) - getF64(rowDriftY, r);
  if (dy > reach) return false;
  if (!(dy > 0)) dy = 0; // also a non-finite y: the whole row
  return columnRuns((sqrt<f64>(max<f64>(reach * reach - dy * dy, 0)) + getF64(rowDriftPhi, r)) * invPhiPitch);
}

/** Sets the runs of the columns within `halfColumns` columns of the window's phi. */
function columnRuns(halfColumns: f64): bool {
  const half = halfColumns * (1 + 1e-9) + 1e-9;
  const c0 = ceil<f64>(winV - half);
  const c1 = floor<f64>(winV + half);
  runB0 = 0;
  runB1 = -1;
  if (!(c1 - c0 + 1 < <f64>phiBins)) {
    runA0 = 0;
    runA1 = phiBins - 1;
    return true;
  }
  if (c1 < c0) return false;
  const length = <i32>(c1 - c0) + 1;
  // c0 lies within one turn of the grid's columns, since the run is shorter than a turn
  let first = <i32>c0;
  if (first < 0) first += phiBins;
  else if (first >= phiBins) first -= phiBins;
  runA0 = first;
  if (first + length <= phiBins) {
    runA1 = first + length - 1;
  } else {
    runA1 = phiBins - 1;
    runB1 = first + length - 1 - phiBins;
  }
  return true;
}

function searchWindowRun(c: i32, y: f64, phi: f64, w: f64, from: i32, to: i32): void {
  for (let q = from; q <= to; q++) {
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    if (!(d <= reach2) || q == c) continue;
    offerBest(q, d, (w * d) * invR2);
  }
}

function searchWindow(c: i32): void {
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  openWindow(y, phi, reach, driftY);
  for (let r = winRow0; r <= winRow1; r++) {
    if (!rowRuns(r)) continue;
    const base = r * phiBins;
    searchWindowRun(c, y, phi, w, base + runA0, base + runA1);
    if (runB1 >= runB0) searchWindowRun(c, y, phi, w, base + runB0, base + runB1);
  }
}

function searchAll(c: i32): void {
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  for (let q = 0; q < cellTotal; q++) {
    if (q == c || getI32(cellJet, q) < 0) continue;
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    offerBest(q, d, (w * d) * invR2);
  }
}

/**
 * A search from scratch once jets have moved (not the first table): the listed jets and the
 * step's new jet first, then one box in the padded rows around the jet, as wide as the best so
 * far (or the reach) plus how far unlisted jets can sit from their cell centres. false when the
 * box does not fit in the padding or too many jets are listed.
 * Measured: against the walk over ordered offsets, whose bound must allow half a cell diagonal
 * for every other jet, the box visits only occupied cells and widens by half a cell per axis.
 */
function searchBox(c: i32): bool {
  if (driftCount > LIST_MAX) return false;
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  offerListed(c, y, phi, w);
  if (seedCell >= 0 && seedCell != c) {
    const d = deltaR2(y, phi, getF64(cellY, seedCell), getF64(cellPhi, seedCell));
    if (d <= reach2) offerBest(seedCell, d, (w * d) * invR2);
  }
  // a first box as wide as the typical neighbour distance at this occupancy: enough when the
  // best lies inside it; else one box as wide as the best so far (or the reach)
  const guess = nearGuess * sqrt<f64>(<f64>cellTotal / <f64>max<i32>(liveCells, 1));
  if (guess < bestRadius()) {
    if (!scanBox(c, y, phi, w, guess)) return false;
    if (bestCell >= 0 && bestRadius() <= guess) return true;
  }
  return scanBox(c, y, phi, w, bestRadius());
}

/** The radius that holds every jet whose key can beat or tie the best so far (an equal key can
 * come from a slightly larger dR2, hence the margin), or the reach. */
// @ts-ignore: decorator
@inline function bestRadius(): f64 {
  return bestCell >= 0 ? min<f64>(reach, sqrt<f64>(bestDR2) * (1 + 1e-8) + 1e-12) : reach;
}

/** Offers every jet in the box of padded rows within radius (plus how far unlisted jets can sit
 * from their centres) of cell c's jet; false when the box does not fit in the padding. */
function scanBox(c: i32, y: f64, phi: f64, w: f64, radius: f64): bool {
  const opened = openBox(y, phi, radius, min<f64>(driftY, insideY), min<f64>(driftPhi, insidePhi));
  if (opened <= 0) return opened == 0;
  scanOpenBox(c, y, phi, w, false);
  return true;
}

/** Finds cell c's neighbour from scratch and sets it (the tree is the caller's). */
export function findNeighbour(c: i32): void {
  resetBest();
  if (getI32(cellWide, c) != 0) searchAll(c);
  else if (driftNorm > 0 && centreOffsetY(c, getF64(cellY, c)) + centreOffsetPhi(c, getF64(cellPhi, c)) > 0 && searchBox(c)) {
    // found in the box
  } else {
    resetBest();
    if (!searchOrdered(c)) {
      resetBest();
      searchWindow(c);
    }
  }
  setNeighbour(c, bestCell, bestDR2, bestKey);
}

// @ts-ignore: decorator
@inline function offerNewJet(q: i32, ck: i32, d: f64): void {
  const key = (getF64(cellW, q) * d) * invR2;
  if (key < getF64(cellNnKey, q)) {
    setNeighbour(q, ck, d, key);
    updateTree(getI32(cellSlot, q));
  }
}

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
  for (let r = winRow0; r <= winRow1; r++) {
    if (!rectangle && !rowRuns(r)) continue;
    // the row's real columns in its padded bits start at padded column padCols
    const base = r * phiBins - padCols;
    const words = padBits + <usize>(r + padRows) * <usize>padRowBytes;
    for (let run = 0; run < 2; run++) {
      const from = (run == 0 ? runA0 : runB0) + padCols;
      const to = (run == 0 ? runA1 : runB1) + padCols;
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
          if ((d <= reach2) & (key <= bestKey)) offerBest(q, d, key);
          if ((d <= reach2) & (d < getF64(cellNnDR2, q))) offerNewJet(q, ck, d);
        }
      }
      if (runB1 < runB0) break;
    }
  }
}

/**
 * The new jet's window as one rectangle in the padded rows, for jets within (widenY, widenPhi) of
 * their cell centres: rows as openWindow() gives them, and in every row the same run of padded
 * columns, whose occupied cells come from one unaligned load of the row's bits (no seam, no word
 * loop). false when the run does not fit (longer than 57 columns or the padding); the caller
 * then scans the window by the rows' own bits.
 */
// the padded columns of the current box: boxFirst..boxLast
let boxFirst: i32 = 0;
let boxLast: i32 = -1;

/** The padded columns within radius + widen of phi, as one run; false when it does not fit. */
function boxColumns(phi: f64, radius: f64, widen: f64): bool {
  const half = (radius + widen) * invPhiPitch * (1 + 1e-9) + 1e-9;
  const v = phi * invPhiPitch - 0.5;
  const c0 = ceil<f64>(v - half);
  const c1 = floor<f64>(v + half);
  if (!(c1 - c0 + 1 < <f64>min<i32>(phiBins, 58))) return false; // also a non-finite phi
  boxFirst = 0;
  boxLast = -1;
  if (c1 < c0) return true; // no column within reach
  const p0 = <i32>c0 + padCols;
  const p1 = <i32>c1 + padCols;
  if (p0 < 0 || p1 >= padStride) return false;
  boxFirst = p0;
  boxLast = p1;
  return true;
}

// the box's packed-row scan: the mask of its width, the steps of that width, rows per word
let boxMask: u64 = 0;
let boxSteps: usize = 0;
let boxGroup: i32 = 1;

/**
 * The box of padded rows within radius of (y, phi), widened by widenY and widenPhi for jets off
 * their centres: its rows (openWindow), its columns (boxFirst..boxLast) and the packing of its
 * rows into words. -1 when it does not fit in the padding, 0 when no column is within reach.
 */
function openBox(y: f64, phi: f64, radius: f64, widenY: f64, widenPhi: f64): i32 {
  if (!boxColumns(phi, radius, widenPhi)) return -1;
  if (boxLast < boxFirst) return 0;
  openWindow(y, phi, radius, widenY);
  const width = boxLast - boxFirst + 1;
  boxMask = (<u64>1 << <u64>width) - 1;
  boxSteps = bitStep + (<usize>(width << 6) << 2);
  boxGroup = rowsPerWord(width);
  return 1;
}

// @ts-ignore: decorator
@inline function rowsPerWord(width: i32): i32 {
  return 64 / width;
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

function scanRectangle(ck: i32, y: f64, phi: f64, w: f64, widenY: f64, widenPhi: f64): bool {
  const opened = openBox(y, phi, reach, widenY, widenPhi);
  if (opened <= 0) return opened == 0;
  scanOpenBox(ck, y, phi, w, true);
  return true;
}

/**
 * The occupied cells of the open box, several rows' bits packed into one word: each a candidate
 * for cell c's neighbour, and with `offers` (c holds the step's new jet, whose own cell reads
 * y = +Inf meanwhile) offered the new jet when it is nearer than their own neighbour.
 */
function scanOpenBox(c: i32, y: f64, phi: f64, w: f64, offers: bool): void {
  const p0 = boxFirst;
  const width = boxLast - p0 + 1;
  const mask = boxMask;
  const steps = boxSteps;
  const group = boxGroup;
  const stride = padStride;
  const row1 = winRow1;
  for (let r = winRow0; r <= row1; r += group) {
    let bits = packedRows(r, min<i32>(r + group - 1, row1), p0, width, mask);
    const start = (r + padRows) * stride + p0;
    while (bits != 0) {
      const q = getI32(padCell, start + getI32(steps, <i32>ctz<u64>(bits)));
      bits &= bits - 1;
      const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
      const key = (w * d) * invR2;
      if ((d <= reach2) & (key <= bestKey) & (q != c)) offerBest(q, d, key);
      if (offers && (d <= reach2) & (d < getF64(cellNnDR2, q))) offerNewJet(q, c, d);
    }
  }
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
    offerBest(q, d, (w * d) * invR2);
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
  resetBest();
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
        if (d <= reach2) offerBest(q, d, (w * d) * invR2);
        offerIfNearer(q, ck, d);
      }
    } else {
      openWindow(y, phi, reach, driftY);
      scanWindow(ck, y, phi, w, false);
    }
    setF64(cellY, ck, y);
  }
  const bc = bestCell;
  const bd = bestDR2;
  const bk = bestKey;
  if (wideCount > (wide ? 1 : 0)) {
    for (let q = 0; q < cellTotal; q++) {
      if (q == ck || getI32(cellWide, q) == 0) continue;
      const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
      if (d < getF64(cellNnDR2, q)) offerNewJet(q, ck, d);
    }
  }
  setNeighbour(ck, bc, bd, bk);
}
