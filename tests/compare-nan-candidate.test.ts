// Tolerance mode (clustering-spec.md section 7): a candidate jet whose pt is NaN (JSON null,
// or a NaN written by an outside implementation) cannot be shown to lie below ptMin, so an
// unmatched one is an extra jet and the event disagrees. Hand-made jets, no outside source.

import { describe, expect, it } from 'vitest';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';

const reference = { count: 2, pt: Float64Array.of(50, 20), rapidity: Float64Array.of(-1.45, 0.55), phi: Float64Array.of(1.03, 3.98) };
/** the reference's jets plus one far from both whose pt is NaN */
const candidate = { count: 3, pt: Float64Array.of(50, 20, NaN), rapidity: Float64Array.of(-1.45, 0.55, 0), phi: Float64Array.of(1.03, 3.98, 5.5) };

describe('a candidate jet with NaN pt', () => {
  it('makes the event disagree when it matches no reference jet', () => {
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 0 });
    expect(matcher.match(reference, candidate)).toBe(false);
  });

  it('counts as an extra jet above ptMin whatever ptMin is', () => {
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 5 });
    matcher.match(reference, candidate);
    expect([matcher.candAbove, matcher.candAboveUnmatched, matcher.candAboveExtra]).toEqual([3, 1, 1]);
  });

  it('leaves an event without it agreeing', () => {
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 0 });
    expect(matcher.match(reference, { ...candidate, count: 2 })).toBe(true);
  });
});
