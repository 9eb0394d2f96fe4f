// The smallest candidate of all cells, kept in a tournament tree (a complete binary tree over the
// P leaves; every inner node holds the leaf that wins its subtree). A changed leaf replays only
// its path to the root, and stops early once the path's winner is unchanged.
//
// Leaf c holds cell c's candidate as three words: candValue f64, candLo i32, candHi i32 — the
// measure, then the smaller and the larger jet index (candHi = BEAM for a beam candidate). The
// order is that of clustering-spec.md section 4 step 1. An empty leaf is (+Inf, BEAM, BEAM),
// after every real candidate, even one whose measure overflowed to +Inf.

import { tree, treeLeaves, candValue, candLo, candHi, getF64, setF64, getI32, setI32 } from './layout';
import { BEAM } from './settings';

// @ts-ignore: decorator
@inline function before(a: i32, b: i32): bool {
  const va = getF64(candValue, a);
  const vb = getF64(candValue, b);
  if (va != vb) return va < vb;
  const la = getI32(candLo, a);
  const lb = getI32(candLo, b);
  if (la != lb) return la < lb;
  return getI32(candHi, a) < getI32(candHi, b);
}

// @ts-ignore: decorator
@inline export function setCandidate(c: i32, value: f64, lo: i32, hi: i32): void {
  setF64(candValue, c, value);
  setI32(candLo, c, lo);
  setI32(candHi, c, hi);
}

// @ts-ignore: decorator
@inline export function setEmptyCandidate(c: i32): void {
  setCandidate(c, Infinity, BEAM, BEAM);
}

/** Called once per engine: leaves know their cell, every leaf empty. */
export function initTree(): void {
  const p = treeLeaves;
  for (let c = 0; c < p; c++) {
    setEmptyCandidate(c);
    setI32(tree, p + c, c);
  }
  buildTree();
}

/** Replays every match, bottom up; once per event after the first candidates are set. */
export function buildTree(): void {
  for (let n = treeLeaves - 1; n >= 1; n--) {
    const l = getI32(tree, n << 1);
    const r = getI32(tree, (n << 1) + 1);
    setI32(tree, n, before(r, l) ? r : l);
  }
}

/** Leaf c changed: replay its path. */
export function updateTree(c: i32): void {
  let n = (treeLeaves + c) >> 1;
  while (n >= 1) {
    const l = getI32(tree, n << 1);
    const r = getI32(tree, (n << 1) + 1);
    const win = before(r, l) ? r : l;
    const old = getI32(tree, n);
    setI32(tree, n, win);
    if (win == old && old != c) return;
    n >>= 1;
  }
}

// @ts-ignore: decorator
@inline export function treeWinner(): i32 {
  return getI32(tree, 1);
}
