// Bit-exact comparison of the pileup values two clusterers give for one event
// (clustering-spec.md section 7's bit-exact mode, applied to sections 8-10): the per-event rho,
// etCut, killed and subtractedAway, and each jet's ghosts, area and ptRaw. The jets themselves
// are compared by bit-exact.ts first; this looks only at what the pileup steps add.

import type { JetSet } from '../types.js';
import { showDouble } from './bit-exact.js';

export interface PileupDifference {
  /** jet number in output order; null for a per-event value */
  jet: number | null;
  field: string;
  engineValue: number;
  referenceValue: number;
}

const EVENT_FIELDS = ['rho', 'etCut', 'killed', 'subtractedAway'] as const;
const JET_FIELDS = ['ghosts', 'area', 'ptRaw'] as const;

/**
 * The first difference in the pileup values of two jet sets with the same jets, or null when
 * identical (Object.is: -0 differs from 0). A set with pileup values against one without is a
 * difference in the field `pileup` (1: present, 0: absent).
 */
export function firstPileupDifference(engine: JetSet, reference: JetSet): PileupDifference | null {
  const a = engine.pileup;
  const b = reference.pileup;
  if (!a || !b) {
    return a === b ? null : { jet: null, field: 'pileup', engineValue: a ? 1 : 0, referenceValue: b ? 1 : 0 };
  }
  for (const field of EVENT_FIELDS) {
    if (!Object.is(a[field], b[field])) return { jet: null, field, engineValue: a[field], referenceValue: b[field] };
  }
  for (let jet = 0; jet < reference.count; jet++) {
    for (const field of JET_FIELDS) {
      if (!Object.is(a[field][jet], b[field][jet])) return { jet, field, engineValue: a[field][jet], referenceValue: b[field][jet] };
    }
  }
  return null;
}

/** One line for stderr or a summary. */
export function describePileupDifference(event: number, difference: PileupDifference): string {
  const where = difference.jet === null ? `event ${event}` : `event ${event}, jet ${difference.jet}`;
  return `${where}, ${difference.field}: engine ${showDouble(difference.engineValue)}, reference ${showDouble(difference.referenceValue)}`;
}
