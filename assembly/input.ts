// One event's towers from the batch input: the threshold and the et < 1e-150 drop (spec
// section 1), then ordering by flat index (spec section 4: jet indices follow the flat index).
// Ordering is an LSD radix sort (at most two passes of at most 11 bits, since the grid has at
// most 2^22 towers), stable, so a repeated index shows up as two equal neighbours.
//
// Writes evIndex i32[n], evEt f64[n] (increasing flat index); sortIndex/sortEt/radixCount are
// scratch.

import { inIndex, inEt, evIndex, evEt, sortIndex, sortEt, radixCount, cellTotal, RADIX_BUCKETS,
  getF64, setF64, getI32, setI32 } from './layout';
import { threshold } from './settings';
import { MIN_ET, STATUS_INDEX_OUTSIDE, STATUS_INDEX_REPEATED } from './shared-constants';


let indexBits: i32 = 0;

/** Whether a tower enters clustering (spec section 1): above the threshold and not below 1e-150 GeV. */
// @ts-ignore: decorator
@inline export function towerKept(et: f64): bool {
  return et > threshold && et >= MIN_ET;
}

export function initInput(): void {
  indexBits = 0;
  while ((1 << indexBits) < cellTotal) indexBits++;
}

function radixPass(fromI: usize, fromE: usize, toI: usize, toE: usize, n: i32, shift: i32, bits: i32): void {
  const buckets = 1 << bits;
  const mask = buckets - 1;
  memory.fill(radixCount, 0, <usize>buckets << 2);
  for (let k = 0; k < n; k++) {
    const b = (getI32(fromI, k) >> shift) & mask;
    setI32(radixCount, b, getI32(radixCount, b) + 1);
  }
  let sum = 0;
  for (let b = 0; b < buckets; b++) {
    const c = getI32(radixCount, b);
    setI32(radixCount, b, sum);
    sum += c;
  }
  for (let k = 0; k < n; k++) {
    const index = getI32(fromI, k);
    const b = (index >> shift) & mask;
    const at = getI32(radixCount, b);
    setI32(radixCount, b, at + 1);
    setI32(toI, at, index);
    setF64(toE, at, getF64(fromE, k));
  }
}

/** Returns the number of towers that enter clustering, or a negative status. */
export function selectTowers(start: i32, end: i32): i32 {
  let n = 0;
  const total = <u32>cellTotal;
  for (let k = start; k < end; k++) {
    const index = getI32(inIndex, k);
    const et = getF64(inEt, k);
    if (<u32>index >= total) return STATUS_INDEX_OUTSIDE;
    if (towerKept(et)) {
      setI32(sortIndex, n, index);
      setF64(sortEt, n, et);
      n++;
    }
  }
  if (n <= 24) {
    // insertion sort: cheaper than the radix passes' bucket sweeps for a handful of towers
    for (let k = 0; k < n; k++) {
      const index = getI32(sortIndex, k);
      const et = getF64(sortEt, k);
      let m = k;
      while (m > 0 && getI32(evIndex, m - 1) > index) {
        setI32(evIndex, m, getI32(evIndex, m - 1));
        setF64(evEt, m, getF64(evEt, m - 1));
        m--;
      }
      setI32(evIndex, m, index);
      setF64(evEt, m, et);
    }
  } else if (indexBits <= 11) {
    radixPass(sortIndex, sortEt, evIndex, evEt, n, 0, max<i32>(indexBits, 1));
  } else {
    const low = indexBits >> 1;
    radixPass(sortIndex, sortEt, evIndex, evEt, n, 0, low);
    radixPass(evIndex, evEt, sortIndex, sortEt, n, low, indexBits - low);
    memory.copy(evIndex, sortIndex, <usize>n << 2);
    memory.copy(evEt, sortEt, <usize>n << 3);
  }
  for (let k = 1; k < n; k++) {
    if (getI32(evIndex, k) == getI32(evIndex, k - 1)) return STATUS_INDEX_REPEATED;
  }
  return n;
}
