// Bit-exact comparison of two jet sets (clustering-spec.md section 7): same jets, same
// constituents, every double identical (Object.is, so -0 and 0 differ and NaN equals NaN).

import type { JetSet } from '../../host/types.js';

const FIELDS = ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const;

/** null when identical, else a one-line description of the first difference */
export function firstJetDifference(a: JetSet, b: JetSet): string | null {
  if (a.count !== b.count) return `jet count ${a.count} vs ${b.count}`;
  for (let k = 0; k < a.count; k++) {
    for (const field of FIELDS) {
      if (!Object.is(a[field][k], b[field][k])) return `jet ${k} ${field} ${a[field][k]} vs ${b[field][k]}`;
    }
    if (a.towerCount[k] !== b.towerCount[k]) return `jet ${k} tower count ${a.towerCount[k]} vs ${b.towerCount[k]}`;
    const ta = a.towers.subarray(a.towerStart[k], a.towerStart[k] + a.towerCount[k]);
    const tb = b.towers.subarray(b.towerStart[k], b.towerStart[k] + b.towerCount[k]);
    if (ta.length !== tb.length) return `jet ${k} tower list lengths ${ta.length} vs ${tb.length}`;
    for (let n = 0; n < ta.length; n++) if (ta[n] !== tb[n]) return `jet ${k} tower ${n}: ${ta[n]} vs ${tb[n]}`;
  }
  return null;
}
