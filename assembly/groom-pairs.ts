// Soft drop's re-clustering of one jet's constituents (clustering-spec.md sections 2-5, as section
// 12 asks): the n towers in evIndex/evEt, with the instance's p and R and no beam candidates
// (settings.ts beamsOff), down to one jet, on one flat table of the live jets in increasing y
// instead of cells or tiles (trimming, with beams, stays on the event grid's cells). A
// large-R jet has some 60-110 towers: few enough that a search may look at every live jet (the
// published nearest-neighbour method with all pairs, arXiv:hep-ph/0512210), and the table's
// order in y lets most searches stop early. Soft drop's p = 0 and R = 1 make every weight 1 and
// invR2 = 1, so section 4's key ((w_i * dR2) * invR2, then the smaller jet index) and a pair's
// measure (min(w_i, w_j) * dR2) * invR2 are dR2 itself, bit for bit (multiplying by 1 is exact;
// grooming.ts configures only these). Each jet keeps its neighbour by that key, sought among all
// live jets (without beams there is no reach), so it is section 4's nn(i) as written; the
// smallest pair comes from the tournament tree (tournament.ts, by slot), and only the jets whose
// neighbour went away search again.
//
// Why a search may stop: dR2 = dy * dy + dphi * dphi >= dy * dy, so a jet whose dy * dy is above
// the best dR2 cannot beat it, nor can any jet farther along the table (its dy is at least as
// large). The same bound limits the new jet's offers: jet q takes it only when its dR2 to it is
// below q's neighbour's, which is at most offerReach2 (an upper bound of those, made exact every
// few steps).
//
// Table (layout.ts), by position 0..liveCount-1, y never decreasing: liveY, livePhi, liveJet.
// Per jet index: jetPlace (its position), jetSlot, jetNn (-1: none), jetNnDR2, and the list of
// the jets whose neighbour it is (pointedHead, pointedNext, pointedPrev), so that a merge finds
// who lost a neighbour without a pass over the table.
//
// pairJetCount: the jets made (towers first, jetInto as in sequence.ts); the last is the root.

import { evIndex, evEt, jetY, jetPhi, jetInto, jetNn, jetNnDR2, jetSlot, slotJet, redo, liveJet,
  liveY, livePhi, jetPlace, pointedHead, pointedNext, pointedPrev, getF64, setF64, getI32,
  setI32 } from './layout';
import { BEAM } from './settings';
import { loadTower, recordMerge, deltaR2 } from './kinematics';
import { startTree, buildTree, updateTree, treeWinner, isBeamCandidate,
  setCandidate as setSlotCandidate, setEmptyCandidate } from './tournament';

// The searches keep the best so far without a branch: integer selects over the doubles' bits
// (dR2 is never negative, so their bits order as the numbers do; a NaN's bits lie above
// +Inf's, so it never wins).
// @ts-ignore: decorator
@inline const INFINITY_BITS: u64 = 0x7ff0000000000000;
/** steps between exact recomputations of offerReach2 */
// @ts-ignore: decorator
@inline const REACH_REFRESH_STEPS: i32 = 8;

export let pairJetCount: i32 = 0;
let liveCount: i32 = 0;
let lostCount: i32 = 0;
/** at least every live jet's neighbour dR2: no offer is taken farther away */
let offerReach2: f64 = Infinity;

// @ts-ignore: decorator
@inline function bitsAt(base: usize, j: i32): u64 {
  return load<u64>(base + (<usize>j << 3));
}

// @ts-ignore: decorator
@inline function setBitsAt(base: usize, j: i32, bits: u64): void {
  store<u64>(base + (<usize>j << 3), bits);
}

/** Jet i leaves the list of its neighbour's pointers. */
function unlinkPointer(i: i32): void {
  const nn = getI32(jetNn, i);
  if (nn < 0) return;
  const prev = getI32(pointedPrev, i);
  const next = getI32(pointedNext, i);
  if (prev >= 0) setI32(pointedNext, prev, next);
  else setI32(pointedHead, nn, next);
  if (next >= 0) setI32(pointedPrev, next, prev);
}

/** Jet i's neighbour becomes q (BEAM: none), at dR2 (its key). */
function setNeighbour(i: i32, q: i32, dR2Bits: u64): void {
  unlinkPointer(i);
  if (q == BEAM) {
    setI32(jetNn, i, -1);
  } else {
    setI32(jetNn, i, q);
    const head = getI32(pointedHead, q);
    setI32(pointedNext, i, head);
    setI32(pointedPrev, i, -1);
    if (head >= 0) setI32(pointedPrev, head, i);
    setI32(pointedHead, q, i);
  }
  setBitsAt(jetNnDR2, i, dR2Bits);
  offerReach2 = max<f64>(offerReach2, reinterpret<f64>(dR2Bits));
}

/** Jet i's candidate into its slot (the tree is the caller's): its pair with its neighbour
 * (section 4 without beams), or none. */
function setCandidate(i: i32): void {
  const s = getI32(jetSlot, i);
  const q = getI32(jetNn, i);
  if (q >= 0) {
    setSlotCandidate(s, getF64(jetNnDR2, i), min<i32>(i, q), max<i32>(i, q));
  } else {
    setEmptyCandidate(s);
  }
}

/** Jet i's neighbour from scratch: from its position p up and down the table until the bound
 * says no farther jet can come first. */
function searchNeighbour(i: i32): void {
  const p = getI32(jetPlace, i);
  const y = getF64(liveY, p);
  const phi = getF64(livePhi, p);
  const count = liveCount;
  const ys = liveY;
  const phis = livePhi;
  const jets = liveJet;
  let bestJet = BEAM;
  let bestDR2 = INFINITY_BITS;
  for (let direction = 1; direction >= -1; direction -= 2) {
    for (let q = p + direction; q >= 0 && q < count; q += direction) {
      const yq = getF64(ys, q);
      const dy = y - yq;
      if (dy * dy > reinterpret<f64>(bestDR2)) break;
      const j = getI32(jets, q);
      const dR2 = reinterpret<u64>(deltaR2(y, phi, yq, getF64(phis, q)));
      const better = (dR2 < bestDR2) | ((dR2 == bestDR2) & (j < bestJet));
      bestJet = select<i32>(j, bestJet, better);
      bestDR2 = select<u64>(dR2, bestDR2, better);
    }
  }
  setNeighbour(i, bestJet, bestDR2);
}

/** The jets whose neighbour was `gone` go onto the redo list. */
function collectLost(gone: i32): void {
  for (let q = getI32(pointedHead, gone); q >= 0; q = getI32(pointedNext, q)) setI32(redo, lostCount++, q);
}

/** The jets on the redo list search again, unless they took the step's new jet `k` in its
 * offers, strictly nearer than the neighbour they lost: then every other jet came
 * after it. */
function searchLost(k: i32): void {
  for (let r = 0; r < lostCount; r++) {
    const j = getI32(redo, r);
    if (getI32(jetNn, j) == k) continue;
    searchNeighbour(j);
    setCandidate(j);
    updateTree(getI32(jetSlot, j));
  }
  lostCount = 0;
}

/** Position p leaves the table; the jets above it move down one. */
function removeAt(p: i32): void {
  const last = --liveCount;
  for (let q = p; q < last; q++) moveEntry(q + 1, q);
}

/** The table's entry at position `from` moves to position `to` (the jet's place follows it). */
// @ts-ignore: decorator
@inline function moveEntry(from: i32, to: i32): void {
  const j = getI32(liveJet, from);
  setI32(liveJet, to, j);
  setI32(jetPlace, j, to);
  setF64(liveY, to, getF64(liveY, from));
  setF64(livePhi, to, getF64(livePhi, from));
}

/** Jet k fills the hole at position p, then moves to where its y belongs. */
function insertNear(p: i32, k: i32): i32 {
  const y = getF64(jetY, k);
  let at = p;
  // shift the jets it passes by one, up or down
  while (at > 0 && getF64(liveY, at - 1) > y) {
    moveEntry(at - 1, at);
    at--;
  }
  while (at + 1 < liveCount && getF64(liveY, at + 1) < y) {
    moveEntry(at + 1, at);
    at++;
  }
  setI32(liveJet, at, k);
  setI32(jetPlace, k, at);
  setF64(liveY, at, y);
  setF64(livePhi, at, getF64(jetPhi, k));
  return at;
}

/** Pair step: jet i and its neighbour make a new jet. */
function merge(i: i32): void {
  const j = getI32(jetNn, i);
  const a = min<i32>(i, j);
  const b = max<i32>(i, j);
  const k = pairJetCount++;
  recordMerge(a, b, k);
  setI32(jetNn, k, -1);
  setI32(pointedHead, k, -1);
  // the new jet takes the smaller of its parents' slots; the other stays empty
  const sa = getI32(jetSlot, a);
  const sb = getI32(jetSlot, b);
  const sk = min<i32>(sa, sb);
  const emptied = max<i32>(sa, sb);
  setEmptyCandidate(emptied);
  updateTree(emptied);
  setI32(slotJet, emptied, -1);
  setI32(jetSlot, k, sk);
  setI32(slotJet, sk, k);
  // the upper parent leaves the table, the new jet starts at the lower one's position
  const pa = getI32(jetPlace, a);
  const pb = getI32(jetPlace, b);
  removeAt(max<i32>(pa, pb));
  const pk = insertNear(min<i32>(pa, pb), k);
  unlinkPointer(a);
  unlinkPointer(b);
  collectLost(a);
  collectLost(b);

  // one pass each way: k's own neighbour, and its offers to the jets within offerReach2
  const y = getF64(jetY, k);
  const phi = getF64(jetPhi, k);
  const offerReach = offerReach2;
  const count = liveCount;
  let bestJet = BEAM;
  let bestDR2 = INFINITY_BITS;
  for (let direction = 1; direction >= -1; direction -= 2) {
    for (let q = pk + direction; q >= 0 && q < count; q += direction) {
      const yq = getF64(liveY, q);
      const dy = y - yq;
      const dy2 = dy * dy;
      if (dy2 > offerReach && dy2 > reinterpret<f64>(bestDR2)) break;
      const jq = getI32(liveJet, q);
      const dR2 = reinterpret<u64>(deltaR2(y, phi, yq, getF64(livePhi, q)));
      const better = (dR2 < bestDR2) | ((dR2 == bestDR2) & (jq < bestJet));
      bestJet = select<i32>(jq, bestJet, better);
      bestDR2 = select<u64>(dR2, bestDR2, better);
      // q's dR2 to k against its neighbour's (for a lost one, the neighbour it lost); k has the
      // largest index, so only a strictly smaller one counts
      if (dR2 < bitsAt(jetNnDR2, jq)) {
        setNeighbour(jq, k, dR2);
        setCandidate(jq);
        updateTree(getI32(jetSlot, jq));
      }
    }
  }
  setNeighbour(k, bestJet, bestDR2);
  setCandidate(k);
  updateTree(sk);
  searchLost(k);
}

/** offerReach2 made exact again: the largest neighbour dR2 of the live jets. */
function refreshOfferReach(): void {
  let widest: u64 = 0;
  for (let p = 0; p < liveCount; p++) {
    const j = getI32(liveJet, p);
    const dR2 = bitsAt(jetNnDR2, j);
    widest = select<u64>(dR2, widest, dR2 > widest);
  }
  offerReach2 = reinterpret<f64>(widest);
}

/** Clusters the n towers in evIndex/evEt (n >= 1) down to one jet. Every slot's candidate is
 * left empty. */
export function pairCluster(n: i32): void {
  pairJetCount = n;
  liveCount = 0;
  lostCount = 0;
  offerReach2 = 0;
  startTree(n);
  for (let t = 0; t < n; t++) {
    loadTower(t, getI32(evIndex, t), getF64(evEt, t));
    setI32(jetInto, t, -1);
    setI32(jetNn, t, -1);
    setI32(pointedHead, t, -1);
    setI32(jetSlot, t, t);
    setI32(slotJet, t, t);
    // towers come in flat-index order, row by row, so this rarely moves anything
    liveCount++;
    insertNear(t, t);
  }
  for (let t = 0; t < n; t++) searchNeighbour(t);
  for (let t = 0; t < n; t++) setCandidate(t);
  buildTree();
  let steps = 0;
  while (liveCount > 1) {
    const s = treeWinner();
    const i = getI32(slotJet, s);
    // no pair at all only for NaN coordinates, which validated input never has
    if (i < 0 || isBeamCandidate(s)) break;
    if (++steps % REACH_REFRESH_STEPS == 0) refreshOfferReach();
    merge(i);
  }
  for (let t = 0; t < n; t++) setEmptyCandidate(t);
}
