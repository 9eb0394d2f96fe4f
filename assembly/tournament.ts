// The smallest candidate of all live jets, kept in a tournament tree (a complete binary tree over
// the event's L leaves, L the power of two >= its towers; every inner node holds the leaf that
// wins its subtree, and that leaf's measure so a match mostly needs no look-up). A changed leaf
// replays only its path to the root, and stops early once the path's winner is unchanged.
//
// Leaves are slots, not cells: tower t starts in slot t, and a merged jet takes one of its
// parents' slots (cells.ts cellSlot, slotCell), so the tree is as deep as the event needs.
// Leaf s holds its jet's candidate as three words: nodeValue[L + s] f64, candLo[s] i32,
// candHi[s] i32 — the measure, then the smaller and the larger jet index (candHi = BEAM for a
// beam candidate). The order is that of clustering-spec.md section 4 step 1. An empty leaf is
// (+Inf, BEAM, BEAM), after every real candidate, even one whose measure overflowed to +Inf.

import { tree, nodeValue, treeLeaves, candLo, candHi, getF64, setF64, getI32, setI32 } from './layout';
import { BEAM } from './settings';

/** leaves of the current event's tree */
let eventLeaves: i32 = 1;

// @ts-ignore: decorator
@inline function before(va: f64, a: i32, vb: f64, b: i32): bool {
  if (va != vb) return va < vb;
  const la = getI32(candLo, a);
  const lb = getI32(candLo, b);
  if (la != lb) return la < lb;
  return getI32(candHi, a) < getI32(candHi, b);
}

// @ts-ignore: decorator
@inline export function setCandidate(s: i32, value: f64, lo: i32, hi: i32): void {
  setF64(nodeValue, eventLeaves + s, value);
  setI32(candLo, s, lo);
  setI32(candHi, s, hi);
}

// @ts-ignore: decorator
@inline export function setEmptyCandidate(s: i32): void {
  setCandidate(s, Infinity, BEAM, BEAM);
}

/** Called once per engine: every slot empty. */
export function initTree(): void {
  for (let s = 0; s < treeLeaves; s++) {
    setI32(candLo, s, BEAM);
    setI32(candHi, s, BEAM);
  }
}

/** Before the event's first candidate: a tree of the least power of two >= n leaves, all empty
 * (every event leaves every slot's candidate empty). */
export function startTree(n: i32): void {
  let leaves = 1;
  while (leaves < n) leaves <<= 1;
  eventLeaves = leaves;
  for (let s = 0; s < leaves; s++) {
    setI32(tree, leaves + s, s);
    setF64(nodeValue, leaves + s, Infinity);
  }
}

/** Replays every match, bottom up. */
export function buildTree(): void {
  const ids = tree;
  const values = nodeValue;
  for (let n = eventLeaves - 1; n >= 1; n--) {
    const l = n << 1;
    const r = l + 1;
    const vl = getF64(values, l);
    const vr = getF64(values, r);
    const il = getI32(ids, l);
    const ir = getI32(ids, r);
    if (before(vr, ir, vl, il)) {
      setI32(ids, n, ir);
      setF64(values, n, vr);
    } else {
      setI32(ids, n, il);
      setF64(values, n, vl);
    }
  }
}

/** Slot s changed: replay its path. */
export function updateTree(s: i32): void {
  // the bases in locals: a global is read again after every store and call
  const ids = tree;
  const values = nodeValue;
  let n = eventLeaves + s;
  let id = s;
  let v = getF64(values, n);
  while (n > 1) {
    const sibling = n ^ 1;
    const sv = getF64(values, sibling);
    const sid = getI32(ids, sibling);
    if (before(sv, sid, v, id)) {
      id = sid;
      v = sv;
    }
    n >>= 1;
    const old = getI32(ids, n);
    if (old == id && id != s) return;
    setI32(ids, n, id);
    setF64(values, n, v);
  }
}

/** The winning slot (node 1 is the leaf itself in a tree of one leaf). */
// @ts-ignore: decorator
@inline export function treeWinner(): i32 {
  return getI32(tree, 1);
}
