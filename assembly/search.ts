// A jet's nearest neighbour from scratch (clustering-spec.md section 4: nn(i) is the jet j with
// the smallest key ((w_i * dR2_ij) * invR2, j), jet i's own weight). Only jets within the reach
// (dR2 <= R*R*(1 + REACH_WIDENING)) are sought: a farther pair always loses to a beam, so it can never be
// the step's choice. Jets with a weight outside the safe range ("wide") look at all jets.
//
// Four ways to search, all exact, tried in this order by findNeighbour():
// - all cells, for wide jets.
// - box, for a jet off its cell's centre once jets have moved: the listed jets and the step's new
//   jet first, then one box of padded rows (windows.ts) as wide as the best so far.
// - ordered: the cell offsets (offsets.ts) visited nearest first; stops once no farther cell can
//   hold a jet as close as the best so far, allowing for how far jets sit from their cell
//   centres (drift). The walk reads the padded rows (layout.ts), where an offset is one flat step.
// - window: row by row, the cells whose centre lies within reach + that row's drift of the jet,
//   when the offsets ran out before the ordered walk could stop.

import { cellTotal, cellY, cellPhi, cellW, cellJet, cellWide, driftList, offStep, offDist, padY,
  padPhi, padCell, cellPad, phiBins, getF64, getI32 } from './layout';
import { invR2, reach2, reach, insideY, insidePhi, insideNorm } from './settings';
import { deltaR2 } from './kinematics';
import { driftY, driftPhi, driftNorm, driftCount, liveCells, centreOffsetY, centreOffsetPhi, setNeighbour } from './cells';
import { offsetCount, offsetReach, nearGuess } from './offsets';
import { best } from './best';
import { window, openWindow, rowRuns, openBox } from './windows';
import { scanOpenBox } from './box-scan';
import { LIST_MAX, LIST_MAX_SEARCH, EQUAL_KEY_WIDENING, COORDINATE_WIDENING } from './search-constants';

/** the cell of the step's new jet while the jets that lost their neighbour search again, else -1 */
let seedCell: i32 = -1;

export function setSeedCell(c: i32): void {
  seedCell = c;
}

/** The listed jets (outside their cells' areas) as candidates for cell c's neighbour. */
// @ts-ignore: decorator
@inline function offerListed(c: i32, y: f64, phi: f64, w: f64): void {
  for (let k = 0; k < driftCount; k++) {
    const q = getI32(driftList, k);
    if (q == c) continue;
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    if (d <= reach2) best.offer(q, d, (w * d) * invR2);
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
    if (best.cell >= 0) limit = min<f64>(limit, sqrt<f64>(best.dR2) * (1 + EQUAL_KEY_WIDENING));
  } else if (seedCell >= 0 && seedCell != c) {
    // the new jet of this step is the likely neighbour: offered first, it bounds the walk at once
    const d = deltaR2(y, phi, getF64(cellY, seedCell), getF64(cellPhi, seedCell));
    if (d <= reach2) {
      best.offer(seedCell, d, (w * d) * invR2);
      limit = min<f64>(limit, sqrt<f64>(d) * (1 + EQUAL_KEY_WIDENING));
    }
  }
  const slack = sqrt<f64>(dyq * dyq + dpq * dpq) + others + COORDINATE_WIDENING;
  const n = offsetCount;
  const from = getI32(cellPad, c);
  // bases and settings in locals: the loop reads no global
  const steps = offStep;
  const dists = offDist;
  const ys = padY;
  const phis = padPhi;
  const r2 = reach2;
  const scale = invR2;
  let bound = best.key;
  for (let o = 0; o < n; o++) {
    if (getF64(dists, o) - slack > limit) return true;
    // one flat step in the padded rows: cells beyond the grid's edges and empty cells read
    // y = +Inf, so d and key are +Inf and the one branch below, rarely taken, is not
    const q = from + getI32(steps, o);
    const d = deltaR2(y, phi, getF64(ys, q), getF64(phis, q));
    const key = (w * d) * scale;
    if ((d <= r2) & (key <= bound)) {
      if (best.offer(getI32(padCell, q), d, key)) limit = min<f64>(limit, sqrt<f64>(d) * (1 + EQUAL_KEY_WIDENING));
      bound = best.key;
    }
  }
  return offsetReach - slack > limit;
}

function searchWindowRun(c: i32, y: f64, phi: f64, w: f64, from: i32, to: i32): void {
  for (let q = from; q <= to; q++) {
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    if (!(d <= reach2) || q == c) continue;
    best.offer(q, d, (w * d) * invR2);
  }
}

function searchWindow(c: i32): void {
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  openWindow(y, phi, reach, driftY);
  for (let r = window.firstRow; r <= window.lastRow; r++) {
    if (!rowRuns(r)) continue;
    const base = r * phiBins;
    searchWindowRun(c, y, phi, w, base + window.runAFirst, base + window.runALast);
    if (window.runBLast >= window.runBFirst) searchWindowRun(c, y, phi, w, base + window.runBFirst, base + window.runBLast);
  }
}

function searchAll(c: i32): void {
  const y = getF64(cellY, c);
  const phi = getF64(cellPhi, c);
  const w = getF64(cellW, c);
  for (let q = 0; q < cellTotal; q++) {
    if (q == c || getI32(cellJet, q) < 0) continue;
    const d = deltaR2(y, phi, getF64(cellY, q), getF64(cellPhi, q));
    best.offer(q, d, (w * d) * invR2);
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
    if (d <= reach2) best.offer(seedCell, d, (w * d) * invR2);
  }
  // a first box as wide as the typical neighbour distance at this occupancy: enough when the
  // best lies inside it; else one box as wide as the best so far (or the reach)
  const guess = nearGuess * sqrt<f64>(<f64>cellTotal / <f64>max<i32>(liveCells, 1));
  if (guess < best.radius()) {
    if (!scanBox(c, y, phi, w, guess)) return false;
    if (best.cell >= 0 && best.radius() <= guess) return true;
  }
  return scanBox(c, y, phi, w, best.radius());
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
  best.reset();
  if (getI32(cellWide, c) != 0) searchAll(c);
  else if (driftNorm > 0 && centreOffsetY(c, getF64(cellY, c)) + centreOffsetPhi(c, getF64(cellPhi, c)) > 0 && searchBox(c)) {
    // found in the box
  } else {
    best.reset();
    if (!searchOrdered(c)) {
      best.reset();
      searchWindow(c);
    }
  }
  setNeighbour(c, best.cell, best.dR2, best.key);
}
