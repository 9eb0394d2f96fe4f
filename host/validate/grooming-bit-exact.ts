// Bit-exact comparison of the groomed rows two clusterers give for one event
// (clustering-spec.md section 7's bit-exact mode, applied to section 12): each jet's trimmed
// and soft-dropped values. The jets themselves are compared by bit-exact.ts first; this looks
// only at what grooming adds.

import { JET_DOUBLE_FIELDS } from '../clustering/jet-set.js';
import type { GroomedFourVectors, JetSet } from '../types.js';

export interface GroomingDifference {
  jet: number;
  /** e.g. "trim.mass", "softDrop.zg"; "trim" alone: one set has the rows and the other not */
  field: string;
  engineValue: number;
  referenceValue: number;
}

/** each group's fields in the order they are compared: the four-vector rows, then the group's own */
const TRIM_FIELDS: readonly string[] = [...JET_DOUBLE_FIELDS, 'towerCount', 'subjets'];
const SOFT_DROP_FIELDS: readonly string[] = [...JET_DOUBLE_FIELDS, 'towerCount', 'zg', 'deltaRg'];

function firstRowDifference(
  group: 'trim' | 'softDrop', a: GroomedFourVectors & Record<string, unknown>, b: GroomedFourVectors & Record<string, unknown>,
  fields: readonly string[], count: number,
): GroomingDifference | null {
  for (let jet = 0; jet < count; jet++) {
    for (const field of fields) {
      const x = (a[field] as ArrayLike<number>)[jet];
      const y = (b[field] as ArrayLike<number>)[jet];
      if (!Object.is(x, y)) return { jet, field: `${group}.${field}`, engineValue: x, referenceValue: y };
    }
  }
  return null;
}

/**
 * The first difference in the groomed rows of two jet sets with the same jets, or null when
 * identical (Object.is: -0 differs from 0).
 */
export function firstGroomingDifference(engine: JetSet, reference: JetSet): GroomingDifference | null {
  const count = reference.count;
  for (const group of ['trim', 'softDrop'] as const) {
    const a = engine[group];
    const b = reference[group];
    if (!a || !b) {
      if (a !== b) return { jet: 0, field: group, engineValue: a ? 1 : 0, referenceValue: b ? 1 : 0 };
      continue;
    }
    const difference = firstRowDifference(group, a as unknown as GroomedFourVectors & Record<string, unknown>, b as unknown as GroomedFourVectors & Record<string, unknown>, group === 'trim' ? TRIM_FIELDS : SOFT_DROP_FIELDS, count);
    if (difference) return difference;
  }
  return null;
}
