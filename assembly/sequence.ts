// The clustering sequence of one event (clustering-spec.md section 4): towers enter as jets
// 0..N-1, every cell keeps its jet's nearest neighbour and candidate, the tournament tree gives
// the smallest candidate, and after each step only the jets that lost their neighbour search
// again; the new jet offers itself to the jets around it.
//
// Per jet: jetInto i32 (the jet it was merged into, -1 while alive or once final).
// finalJet i32[finalCount]: the final jets in the order they became final. redo i32: the cells
// whose neighbour went away in the current step.

import { evIndex, evEt, cellJet, cellNn, cellY, cellPhi, cellW, cellNnKey, jetInto, jetY,
  jetPhi, finalJet, redo, cellSlot, slotCell, getF64, getI32, setI32 } from './layout';
import { BEAM, invR2 } from './settings';
import { loadTower, recordMerge, deltaR2 } from './kinematics';
import { resetDrift, placeJet, clearCell, unlink, detachPointers, freeCellNear, assignSlot, setNeighbour,
  centreOffsetY, centreOffsetPhi } from './cells';
import { findNeighbour, setSeedCell } from './search';
import { scanNewJet } from './new-jet';
import { startTree, buildTree, updateTree, treeWinner, isBeamCandidate } from './tournament';

export let finalCount: i32 = 0;
export let jetCount: i32 = 0;

/**
 * The jets in redo[0..count) lost their neighbour; each searches again, except that a jet whose
 * key to the step's new jet (in cell `seed`, or -1) is strictly below its lost neighbour's key
 * takes the new jet at once: every other jet was already after the lost neighbour in its order
 * (its neighbour was exact), so none can come before the new jet.
 */
function redoSearches(count: i32, seed: i32): void {
  for (let k = 0; k < count; k++) {
    const c = getI32(redo, k);
    if (c == seed || getI32(cellJet, c) < 0) continue;
    if (seed >= 0) {
      const d = deltaR2(getF64(cellY, c), getF64(cellPhi, c), getF64(cellY, seed), getF64(cellPhi, seed));
      const key = (getF64(cellW, c) * d) * invR2;
      if (key < getF64(cellNnKey, c)) {
        setNeighbour(c, seed, d, key);
        updateTree(getI32(cellSlot, c));
        continue;
      }
    }
    findNeighbour(c);
    updateTree(getI32(cellSlot, c));
  }
}

function finish(c: i32): void {
  setI32(finalJet, finalCount++, getI32(cellJet, c));
  const count = detachPointers(c, redo, 0);
  unlink(c);
  clearCell(c);
  updateTree(getI32(cellSlot, c));
  redoSearches(count, -1);
}

function merge(ca: i32, cb: i32): void {
  const i = getI32(cellJet, ca);
  const j = getI32(cellJet, cb);
  const k = jetCount++;
  recordMerge(i, j, k);

  let count = detachPointers(ca, redo, 0);
  count = detachPointers(cb, redo, count);
  unlink(ca);
  unlink(cb);
  clearCell(ca);
  clearCell(cb);

  // a free cell near the new jet; failing that, the nearer parent cell
  const y = getF64(jetY, k);
  const phi = getF64(jetPhi, k);
  const da = centreOffsetY(ca, y) + centreOffsetPhi(ca, phi);
  const db = centreOffsetY(cb, y) + centreOffsetPhi(cb, phi);
  const ck = freeCellNear(y, phi, db < da ? cb : ca);
  // the new jet takes one parent's slot; the other stays empty for the rest of the event
  const sa = getI32(cellSlot, ca);
  const sb = getI32(cellSlot, cb);
  const sk = min<i32>(sa, sb);
  assignSlot(ck, sk);
  placeJet(ck, k);
  scanNewJet(ck);
  updateTree(sk);
  updateTree(sa ^ sb ^ sk);
  setSeedCell(ck);
  redoSearches(count, ck);
  setSeedCell(-1);
}

/** Clusters the n towers in evIndex/evEt; the final jets end up in finalJet[0..finalCount). */
export function clusterTowers(n: i32): void {
  resetDrift();
  startTree(n);
  finalCount = 0;
  jetCount = n;
  for (let t = 0; t < n; t++) {
    loadTower(t, getI32(evIndex, t), getF64(evEt, t));
    setI32(jetInto, t, -1);
    assignSlot(getI32(evIndex, t), t);
    placeJet(getI32(evIndex, t), t);
  }
  for (let t = 0; t < n; t++) findNeighbour(getI32(evIndex, t));
  buildTree();
  let live = n;
  while (live > 0) {
    const s = treeWinner();
    const c = getI32(slotCell, s);
    if (isBeamCandidate(s)) {
      finish(c);
    } else {
      merge(c, getI32(cellNn, c));
    }
    live--;
  }
}

/** The first neighbour table of the n towers in evIndex/evEt, as jet indices (-1: none within
 * the reach) into out; the cells are left empty. */
export function firstNeighbours(n: i32, out: usize): void {
  resetDrift();
  startTree(n);
  for (let t = 0; t < n; t++) {
    loadTower(t, getI32(evIndex, t), getF64(evEt, t));
    assignSlot(getI32(evIndex, t), t);
    placeJet(getI32(evIndex, t), t);
  }
  for (let t = 0; t < n; t++) findNeighbour(getI32(evIndex, t));
  for (let t = 0; t < n; t++) {
    const q = getI32(cellNn, getI32(evIndex, t));
    setI32(out, t, q < 0 ? -1 : getI32(cellJet, q));
  }
  for (let t = 0; t < n; t++) {
    const c = getI32(evIndex, t);
    detachPointers(c, redo, 0);
  }
  for (let t = 0; t < n; t++) {
    const c = getI32(evIndex, t);
    clearCell(c);
  }
}
