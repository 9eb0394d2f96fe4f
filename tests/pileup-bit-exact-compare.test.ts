// The bit-exact comparison of pileup values (clustering-spec.md section 7 applied to sections 8-10).

import { describe, expect, it } from 'vitest';
import { allocateJetSet } from '../host/clustering/jet-set.js';
import { describePileupDifference, firstPileupDifference } from '../host/validate/pileup-bit-exact.js';
import type { JetSet } from '../host/types.js';

function jetsWithPileup(values: { rho?: number; area?: number[] } = {}): JetSet {
  const area = values.area ?? [0.5, 0.25];
  const jets = allocateJetSet(area.length);
  jets.pileup = {
    rho: values.rho ?? 12.5, etCut: 1.25, killed: 3, subtractedAway: 1,
    ghosts: Int32Array.from(area, (_, k) => 10 + k), area: Float64Array.from(area), ptRaw: Float64Array.from(area, (a) => 40 * a),
  };
  return jets;
}

describe('pileup values compared bit for bit', () => {
  it('find nothing between equal values', () => {
    expect(firstPileupDifference(jetsWithPileup(), jetsWithPileup())).toBeNull();
    expect(firstPileupDifference(allocateJetSet(0), allocateJetSet(0))).toBeNull();
  });

  it('name a per-event value that differs', () => {
    const difference = firstPileupDifference(jetsWithPileup({ rho: 12.500000000000002 }), jetsWithPileup());
    expect(difference).toEqual({ jet: null, field: 'rho', engineValue: 12.500000000000002, referenceValue: 12.5 });
    expect(describePileupDifference(7, difference!)).toBe('event 7, rho: engine 12.500000000000002, reference 12.5');
  });

  it('name the jet and field of a per-jet value that differs, -0 against 0 included', () => {
    const difference = firstPileupDifference(jetsWithPileup({ area: [0.5, -0] }), jetsWithPileup({ area: [0.5, 0] }));
    expect(difference).toMatchObject({ jet: 1, field: 'area' });
    expect(describePileupDifference(2, difference!)).toBe('event 2, jet 1, area: engine -0, reference 0');
  });

  it('count values present on one side only as a difference', () => {
    expect(firstPileupDifference(allocateJetSet(2), jetsWithPileup())).toMatchObject({ field: 'pileup', engineValue: 0, referenceValue: 1 });
  });
});
