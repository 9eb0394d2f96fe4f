// The best neighbour a search has found so far, by the key of clustering-spec.md section 4:
// ((w * dR2) * invR2, j), w the searching jet's own weight.
//
// Why module-level globals: a search returns four values (cell, jet, dR2, key) and an
// AssemblyScript function returns one. Wasm globals are what locals are to V8 here, and they are
// read in the scans' innermost loops; a result block in linear memory would put a load and a
// store where a register now serves. They are grouped under one name, `best`, and written only
// through reset() and offer().

import { cellJet, getI32 } from './layout';
import { reach, BEAM } from './settings';
import { EQUAL_KEY_WIDENING, COORDINATE_WIDENING } from './search-constants';

export namespace best {
  /** the neighbour's cell, or -1 while none is found */
  export let cell: i32 = -1;
  /** its jet index (BEAM while none is found), the key's tie-break */
  export let jet: i32 = BEAM;
  export let dR2: f64 = Infinity;
  export let key: f64 = Infinity;

  // @ts-ignore: decorator
  @inline export function reset(): void {
    cell = -1;
    jet = BEAM;
    dR2 = Infinity;
    key = Infinity;
  }

  /** Cell q's jet, at dR2 d and key `byKey`, replaces the best when it comes first by the key. */
  // @ts-ignore: decorator
  @inline export function offer(q: i32, d: f64, byKey: f64): bool {
    const j = getI32(cellJet, q);
    if (byKey < key || (byKey == key && j < jet)) {
      cell = q;
      jet = j;
      dR2 = d;
      key = byKey;
      return true;
    }
    return false;
  }

  /** The radius that holds every jet whose key can beat or tie the best so far (an equal key can
   * come from a slightly larger dR2: search-constants.ts), or the reach. */
  // @ts-ignore: decorator
  @inline export function radius(): f64 {
    return cell >= 0 ? min<f64>(reach, sqrt<f64>(dR2) * (1 + EQUAL_KEY_WIDENING) + COORDINATE_WIDENING) : reach;
  }
}
