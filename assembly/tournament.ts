// The smallest candidate of all cells, kept in a tournament tree (a complete binary tree over the
// P leaves; every inner node holds the leaf that wins its subtree, and that leaf's measure so a
// match mostly needs no look-up). A changed leaf replays only its path to the root, and stops
// early once the path's winner is unchanged.
//
// Leaf c holds cell c's candidate as three words: candValue f64 (= nodeValue[P + c]), candLo
// i32, candHi i32 — the measure, then the smaller and the larger jet index (candHi = BEAM for a
// beam candidate). The order is that of clustering-spec.md section 4 step 1. An empty leaf is
// (+Inf, BEAM, BEAM), after every real candidate, even one whose measure overflowed to +Inf.

import { tree, nodeValue, treeLeaves, candValue, candLo, candHi, getF64, setF64, getI32, setI32 } from './layout';
import { BEAM } from './settings';

// @ts-ignore: decorator
@inline function before(va: f64, a: i32, vb: f64, b: i32): bool {
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

/** Replays every match, bottom up. With all leaves empty any winner is right, so the tree is
 * valid between events whatever it holds. */
export function buildTree(): void {
  const ids = tree;
  const values = nodeValue;
  for (let n = treeLeaves - 1; n >= 1; n--) {
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

/** Leaf c changed: replay its path. */
export function updateTree(c: i32): void {
  // the bases in locals: a global is read again after every store and call
  const ids = tree;
  const values = nodeValue;
  let n = treeLeaves + c;
  let id = c;
  let v = getF64(values, n);
  while (n > 1) {
    const s = n ^ 1;
    const sv = getF64(values, s);
    const sid = getI32(ids, s);
    if (before(sv, sid, v, id)) {
      id = sid;
      v = sv;
    }
    n >>= 1;
    const old = getI32(ids, n);
    if (old == id && id != c) return;
    setI32(ids, n, id);
    setF64(values, n, v);
  }
}

// @ts-ignore: decorator
@inline export function treeWinner(): i32 {
  return getI32(tree, 1);
}
