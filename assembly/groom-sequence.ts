// Soft drop's re-clustering (clustering-spec.md sections 2-5, as section 12 asks): the n towers
// of one jet in evIndex/evEt, clustered with p = 0 and R = 1 without beams down to one jet, on
// the jet's own small tiles (groom-tiles.ts) instead of the event grid's cells, whose searches
// over R = 1 degenerate once the Cambridge/Aachen jets have left their cells. Every live jet
// keeps its nearest neighbour by section 4's key ((w_i * dR2) * invR2, then the smaller index;
// here w = 1 and invR2 = 1, so the key is dR2 itself) among the jets within the search reach,
// and its pair candidate in the tournament tree (tournament.ts, by slot).
//
// The reach starts at about a tower diagonal. While the smallest pair lies within it, that pair
// is some jet's neighbour (section 4's argument) and wins; once no jet has a neighbour within
// the reach, the reach grows (FIRST_REACH_TOWERS, REACH_GROWTH) and the tiles and neighbours are
// made again, until one tile holds every jet and the reach is unlimited. When the towers span pi
// or more in phi there is one tile from the start (groom-tiles.ts).
//
// After a merge only these change: the jets whose neighbour was one of the parents (searched
// again, unless the new jet is strictly nearer than the lost neighbour: then it is theirs, since
// every other jet came after the lost one), the jets for which the new jet comes first (the new
// jet has the largest index, so only a strictly smaller key counts) and the new jet itself.
//
// groomJetCount: the jets made (towers first, jetInto as in sequence.ts); the last is the root.
// Trimming does not come here: at R = RSUB the event grid's sequence is faster (grooming.ts).

import { evIndex, evEt, jetY, jetPhi, jetKt2, jetInto, jetW, jetNn, jetNnDR2, jetNnKey, jetSlot,
  slotJet, tileHead, tileNext, redo, getF64, setF64, getI32, setI32 } from './layout';
import { invR2, etaPitch, phiPitch, BEAM } from './settings';
import { loadTower, mergeJets, deltaR2, weightOf } from './kinematics';
import { startTree, buildTree, updateTree, treeWinner, setCandidate, setEmptyCandidate, isBeamCandidate } from './tournament';
import { measureBox, layTiles, insertJet, removeJet, setLocalPhi, openAround, tileColumns,
  aroundRowFirst, aroundRowLast, aroundColumnFirst, aroundColumnLast } from './groom-tiles';

/** soft drop's first reach, in tower pitches: a little more than a tower's diagonal (measured: 1.05,
 * 1.5 and 2.2 took the same time within 1 %) */
// @ts-ignore: decorator
@inline const FIRST_REACH_TOWERS: f64 = 1.5;
// @ts-ignore: decorator
@inline const REACH_GROWTH: f64 = 2;
/** jetNn of a jet whose neighbour went away in this step, until it has a new one */
// @ts-ignore: decorator
@inline const LOST: i32 = -2;

export let groomJetCount: i32 = 0;

/** pairs with dR2 above this are not looked at (+Inf: every pair) */
let searchReach2: f64 = Infinity;
let lostCount: i32 = 0;

// The searches keep the best so far without a branch (which jet wins is data no predictor
// learns): integer selects over the doubles' bits, which V8 keeps as conditional moves. dR2 and
// the keys are never negative (nor -0), so their bits order as the numbers do; a NaN's bits lie
// above +Inf's, so it never wins, as with comparisons of doubles.
// @ts-ignore: decorator
@inline const INFINITY_BITS: u64 = 0x7ff0000000000000;

/** Jet i's neighbour from scratch among the jets in the 3 x 3 tiles around it. */
function searchNeighbour(i: i32): void {
  openAround(i);
  const y = getF64(jetY, i);
  const phi = getF64(jetPhi, i);
  const w = getF64(jetW, i);
  const limit = searchReach2;
  const scale = invR2;
  const limitBits = reinterpret<u64>(limit);
  let bestJet = BEAM;
  let bestKey = INFINITY_BITS;
  let bestDR2 = INFINITY_BITS;
  for (let row = aroundRowFirst; row <= aroundRowLast; row++) {
    const base = row * tileColumns;
    for (let tile = base + aroundColumnFirst; tile <= base + aroundColumnLast; tile++) {
      for (let j = getI32(tileHead, tile); j >= 0; j = getI32(tileNext, j)) {
        const d = reinterpret<u64>(deltaR2(y, phi, getF64(jetY, j), getF64(jetPhi, j)));
        const key = reinterpret<u64>((w * reinterpret<f64>(d)) * scale);
        const better = (j != i) & (d <= limitBits) & ((key < bestKey) | ((key == bestKey) & (j < bestJet)));
        bestJet = select<i32>(j, bestJet, better);
        bestKey = select<u64>(key, bestKey, better);
        bestDR2 = select<u64>(d, bestDR2, better);
      }
    }
  }
  setI32(jetNn, i, bestJet == BEAM ? -1 : bestJet);
  setF64(jetNnDR2, i, reinterpret<f64>(bestDR2));
  setF64(jetNnKey, i, reinterpret<f64>(bestKey));
}

/** Jet i's candidate: its pair with its neighbour (spec section 4 without beams), or, with no
 * neighbour within the reach, a beam at +Inf that the sequence takes as "widen the reach". The
 * tree is the caller's. */
function setJetCandidate(i: i32): void {
  const s = getI32(jetSlot, i);
  const q = getI32(jetNn, i);
  if (q >= 0) {
    const d = (min<f64>(getF64(jetW, i), getF64(jetW, q)) * getF64(jetNnDR2, i)) * invR2;
    setCandidate(s, d, min<i32>(i, q), max<i32>(i, q));
  } else {
    setCandidate(s, Infinity, i, BEAM);
  }
}

function refreshCandidate(i: i32): void {
  setJetCandidate(i);
  updateTree(getI32(jetSlot, i));
}

/** Marks the jets whose neighbour was `gone` or `other` (-1: none) as lost, onto the redo list:
 * one pass over the tiles around either (a neighbour lies within the reach, so in them). */
function collectLost(gone: i32, other: i32): void {
  openAround(gone);
  let rowFirst = aroundRowFirst;
  let rowLast = aroundRowLast;
  let columnFirst = aroundColumnFirst;
  let columnLast = aroundColumnLast;
  if (other >= 0) {
    openAround(other);
    rowFirst = min<i32>(rowFirst, aroundRowFirst);
    rowLast = max<i32>(rowLast, aroundRowLast);
    columnFirst = min<i32>(columnFirst, aroundColumnFirst);
    columnLast = max<i32>(columnLast, aroundColumnLast);
  }
  const second = other >= 0 ? other : gone;
  for (let row = rowFirst; row <= rowLast; row++) {
    const base = row * tileColumns;
    for (let tile = base + columnFirst; tile <= base + columnLast; tile++) {
      for (let j = getI32(tileHead, tile); j >= 0; j = getI32(tileNext, j)) {
        const nn = getI32(jetNn, j);
        if ((nn == gone) | (nn == second)) {
          setI32(jetNn, j, LOST);
          setI32(redo, lostCount++, j);
        }
      }
    }
  }
}

/** The lost jets still without a neighbour search from scratch. */
function searchLost(): void {
  for (let k = 0; k < lostCount; k++) {
    const j = getI32(redo, k);
    if (getI32(jetNn, j) != LOST) continue;
    searchNeighbour(j);
    refreshCandidate(j);
  }
  lostCount = 0;
}

/** The new jet k (in its tile) finds its neighbour and offers itself to the jets around it. */
function offerNewJet(k: i32): void {
  openAround(k);
  const y = getF64(jetY, k);
  const phi = getF64(jetPhi, k);
  const w = getF64(jetW, k);
  const limit = searchReach2;
  const scale = invR2;
  const limitBits = reinterpret<u64>(limit);
  let bestJet = BEAM;
  let bestKey = INFINITY_BITS;
  let bestDR2 = INFINITY_BITS;
  for (let row = aroundRowFirst; row <= aroundRowLast; row++) {
    const base = row * tileColumns;
    for (let tile = base + aroundColumnFirst; tile <= base + aroundColumnLast; tile++) {
      for (let j = getI32(tileHead, tile); j >= 0; j = getI32(tileNext, j)) {
        const dR2 = deltaR2(y, phi, getF64(jetY, j), getF64(jetPhi, j));
        const d = reinterpret<u64>(dR2);
        const key = reinterpret<u64>((w * dR2) * scale);
        const within = (j != k) & (d <= limitBits);
        const better = within & ((key < bestKey) | ((key == bestKey) & (j < bestJet)));
        bestJet = select<i32>(j, bestJet, better);
        bestKey = select<u64>(key, bestKey, better);
        bestDR2 = select<u64>(d, bestDR2, better);
        // j's key to k; a lost jet compares with the key of the neighbour it lost
        const keyOfJ = (getF64(jetW, j) * dR2) * scale;
        if (within && keyOfJ < getF64(jetNnKey, j)) {
          setI32(jetNn, j, k);
          setF64(jetNnDR2, j, dR2);
          setF64(jetNnKey, j, keyOfJ);
          refreshCandidate(j);
        }
      }
    }
  }
  setI32(jetNn, k, bestJet == BEAM ? -1 : bestJet);
  setF64(jetNnDR2, k, reinterpret<f64>(bestDR2));
  setF64(jetNnKey, k, reinterpret<f64>(bestKey));
  refreshCandidate(k);
}

function merge(i: i32, j: i32): void {
  const a = min<i32>(i, j);
  const b = max<i32>(i, j);
  const k = groomJetCount++;
  mergeJets(a, b, k);
  setI32(jetInto, a, k);
  setI32(jetInto, b, k);
  setI32(jetInto, k, -1);
  const w = weightOf(getF64(jetKt2, k));
  setF64(jetW, k, w);
  lostCount = 0;
  collectLost(a, b);
  // a parent on the other's list is no longer searched for
  setI32(jetNn, a, -1);
  setI32(jetNn, b, -1);
  removeJet(a);
  removeJet(b);
  // the new jet takes the smaller of its parents' slots; the other stays empty
  const sa = getI32(jetSlot, a);
  const sb = getI32(jetSlot, b);
  const sk = min<i32>(sa, sb);
  const empty = max<i32>(sa, sb);
  setI32(slotJet, empty, -1);
  setEmptyCandidate(empty);
  updateTree(empty);
  setI32(jetSlot, k, sk);
  setI32(slotJet, sk, k);
  setLocalPhi(k);
  insertJet(k);
  offerNewJet(k);
  searchLost();
}

/** Tiles at least `side` wide (+Inf: one tile) over the n slots' live jets, their neighbours
 * and candidates made again. */
function retile(n: i32, side: f64, sideReach2: f64): void {
  searchReach2 = layTiles(side) ? Infinity : sideReach2;
  for (let s = 0; s < n; s++) {
    const j = getI32(slotJet, s);
    if (j >= 0) insertJet(j);
  }
  for (let s = 0; s < n; s++) {
    const j = getI32(slotJet, s);
    if (j >= 0) {
      searchNeighbour(j);
      setJetCandidate(j);
    }
  }
  buildTree();
}

/** Clusters the n towers in evIndex/evEt (n >= 1) down to one jet; every slot's candidate is
 * left empty. */
export function groomCluster(n: i32): void {
  startTree(n);
  groomJetCount = n;
  for (let t = 0; t < n; t++) {
    loadTower(t, getI32(evIndex, t), getF64(evEt, t));
    setI32(jetInto, t, -1);
    setF64(jetW, t, weightOf(getF64(jetKt2, t)));
    setI32(jetSlot, t, t);
    setI32(slotJet, t, t);
  }
  measureBox(n);
  let side = FIRST_REACH_TOWERS * max<f64>(etaPitch, phiPitch);
  retile(n, side, side * side);
  for (let live = n; live > 1; live--) {
    let s = treeWinner();
    // no pair within the reach: a wider one (none at all only for NaN coordinates, which
    // validated input never has)
    while (isBeamCandidate(s) && side < Infinity) {
      side = side * REACH_GROWTH;
      retile(n, side, side * side);
      s = treeWinner();
    }
    if (isBeamCandidate(s)) break;
    const i = getI32(slotJet, s);
    merge(i, getI32(jetNn, i));
  }
  for (let s = 0; s < n; s++) setEmptyCandidate(s);
}
