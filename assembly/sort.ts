// Bottom-up merge sort of a permutation: perm holds n values v, ordered by key[v] (f64,
// increasing), ties by tie[v] (i32, increasing) or by v itself when tie is 0. scratch holds n
// i32. Used for the search offsets (once per engine) and the final jets (once per event).

import { getF64, getI32, setI32 } from './layout';

// @ts-ignore: decorator
@inline function tieOf(tie: usize, v: i32): i32 {
  return tie == 0 ? v : getI32(tie, v);
}

export function sortPermutation(perm: usize, scratch: usize, n: i32, key: usize, tie: usize): void {
  let src = perm;
  let dst = scratch;
  for (let width = 1; width < n; width <<= 1) {
    for (let lo = 0; lo < n; lo += width << 1) {
      const mid = min<i32>(lo + width, n);
      const hi = min<i32>(lo + (width << 1), n);
      let a = lo;
      let b = mid;
      let out = lo;
      while (a < mid && b < hi) {
        const va = getI32(src, a);
        const vb = getI32(src, b);
        const ka = getF64(key, va);
        const kb = getF64(key, vb);
        if (kb < ka || (kb == ka && tieOf(tie, vb) < tieOf(tie, va))) {
          setI32(dst, out++, vb);
          b++;
        } else {
          setI32(dst, out++, va);
          a++;
        }
      }
      while (a < mid) setI32(dst, out++, getI32(src, a++));
      while (b < hi) setI32(dst, out++, getI32(src, b++));
    }
    const swap = src;
    src = dst;
    dst = swap;
  }
  if (src != perm) memory.copy(perm, src, <usize>n << 2);
}
