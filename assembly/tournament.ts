// The smallest candidate of all live jets, kept in a tournament tree (a complete binary tree over
// the event's L leaves, L the power of two >= its towers; every inner node holds the leaf that
// wins its subtree and that leaf's measure, whose tie word is looked up by slot). A changed leaf
// replays only its path to the root, and stops early once the path's winner is unchanged.
//
// Leaves are slots, not cells: tower t starts in slot t, and a merged jet takes one of its
// parents' slots (cells.ts cellSlot, slotCell), so the tree is as deep as the event needs.
// Leaf s holds its jet's candidate as two words: nodeValue[L + s], the measure's bits as a u64,
// and candTie[s] u64, the smaller jet index << 32 | the larger one (BEAM for a beam candidate).
// Measures are never negative, so their bits order as the numbers do, and both indices are
// non-negative, so the tie word orders as the pair: the order of clustering-spec.md section 4
// step 1 is the bits, then the tie word. An empty leaf is (+Inf, BEAM << 32 | BEAM), after every
// real candidate, even one whose measure overflowed to +Inf. (A NaN measure, which the spec does
// not order, sorts after +Inf; DEVELOPERS.md "Readings".)
// A match is decided without a branch: integer compares and selects, which V8 keeps as
// conditional moves (a select of doubles it turns into a branch). Which side wins is data no
// predictor learns, and on a grid equal measures, which took two more branches, are common.

import { tree, nodeValue, treeLeaves, candTie, getI32, setI32 } from './layout';
import { BEAM } from './settings';

// @ts-ignore: decorator
@inline const EMPTY_TIE: u64 = (<u64>BEAM << 32) | <u64>BEAM;
// @ts-ignore: decorator
@inline const INFINITY_BITS: u64 = 0x7ff0000000000000;

/** leaves of the current event's tree */
let eventLeaves: i32 = 1;

// @ts-ignore: decorator
@inline function tieOf(s: i32): u64 {
  return load<u64>(candTie + (<usize>s << 3));
}

// @ts-ignore: decorator
@inline function valueAt(values: usize, n: i32): u64 {
  return load<u64>(values + (<usize>n << 3));
}

// @ts-ignore: decorator
@inline function setValueAt(values: usize, n: i32, bits: u64): void {
  store<u64>(values + (<usize>n << 3), bits);
}

/** does candidate (vb, tieB) come before (va, tieA)? */
// @ts-ignore: decorator
@inline function comesBefore(vb: u64, tieB: u64, va: u64, tieA: u64): bool {
  return (vb < va) | ((vb == va) & (tieB < tieA));
}

// @ts-ignore: decorator
@inline export function setCandidate(s: i32, value: f64, lo: i32, hi: i32): void {
  setValueAt(nodeValue, eventLeaves + s, reinterpret<u64>(value));
  store<u64>(candTie + (<usize>s << 3), (<u64>lo << 32) | <u64>hi);
}

// @ts-ignore: decorator
@inline export function setEmptyCandidate(s: i32): void {
  setCandidate(s, Infinity, BEAM, BEAM);
}

/** Is slot s's candidate its beam? */
// @ts-ignore: decorator
@inline export function isBeamCandidate(s: i32): bool {
  return <i32>(tieOf(s) & 0xffffffff) == BEAM;
}

/** Called once per engine: every slot empty. */
export function initTree(): void {
  for (let s = 0; s < treeLeaves; s++) store<u64>(candTie + (<usize>s << 3), EMPTY_TIE);
}

/** Before the event's first candidate: a tree of the least power of two >= n leaves, all empty
 * (every event leaves every slot's candidate empty). */
export function startTree(n: i32): void {
  let leaves = 1;
  while (leaves < n) leaves <<= 1;
  eventLeaves = leaves;
  for (let s = 0; s < leaves; s++) {
    setI32(tree, leaves + s, s);
    setValueAt(nodeValue, leaves + s, INFINITY_BITS);
  }
}

/** Replays every match, bottom up. */
export function buildTree(): void {
  const ids = tree;
  const values = nodeValue;
  for (let n = eventLeaves - 1; n >= 1; n--) {
    const l = n << 1;
    const r = l + 1;
    const vl = valueAt(values, l);
    const vr = valueAt(values, r);
    const il = getI32(ids, l);
    const ir = getI32(ids, r);
    const right = comesBefore(vr, tieOf(ir), vl, tieOf(il));
    setI32(ids, n, select<i32>(ir, il, right));
    setValueAt(values, n, select<u64>(vr, vl, right));
  }
}

/** Slot s changed: replay its path. */
export function updateTree(s: i32): void {
  // the bases in locals: a global is read again after every store and call
  const ids = tree;
  const values = nodeValue;
  let n = eventLeaves + s;
  let id = s;
  let v = valueAt(values, n);
  let tie = tieOf(s);
  while (n > 1) {
    const sibling = n ^ 1;
    const sv = valueAt(values, sibling);
    const sid = getI32(ids, sibling);
    const siblingTie = tieOf(sid);
    const taken = comesBefore(sv, siblingTie, v, tie);
    id = select<i32>(sid, id, taken);
    v = select<u64>(sv, v, taken);
    tie = select<u64>(siblingTie, tie, taken);
    n >>= 1;
    const old = getI32(ids, n);
    if (old == id && id != s) return;
    setI32(ids, n, id);
    setValueAt(values, n, v);
  }
}

/** The winning slot (node 1 is the leaf itself in a tree of one leaf). */
// @ts-ignore: decorator
@inline export function treeWinner(): i32 {
  return getI32(tree, 1);
}
