// The spread (RMS about the mean) of a response distribution in the validation report is the
// standard deviation of the values, also when the spread is tiny beside the mean: a candidate
// with a systematic 1 % pt offset known to 1e-9 must not report a spread of a few 1e-9 made
// of rounding. Expected values are computed here with the two-pass formula (common practice).

import { describe, expect, it } from 'vitest';
import { DeviationHistogram } from '../host/validate/deviation-histogram.js';

/** seeded uniform values in [-0.5, 0.5) */
function uniforms(count: number, seed: number): number[] {
  let state = seed;
  const out: number[] = [];
  for (let k = 0; k < count; k++) {
    state = (state * 1103515245 + 12345) % 2147483648;
    out.push(state / 2147483648 - 0.5);
  }
  return out;
}

function twoPassSpread(values: number[]): number {
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  return Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / values.length);
}

describe('the spread of the pt response', () => {
  it('of a 1 % offset with a 1e-9 spread is that spread to 1e-6 relative', () => {
    const values = uniforms(100_000, 7).map((u) => 0.01 + 1e-9 * u);
    const histogram = new DeviationHistogram();
    for (const x of values) histogram.add(x);
    const expected = twoPassSpread(values);
    expect(Math.abs(histogram.rms()! / expected - 1)).toBeLessThan(1e-6);
  });

  it('of one value repeated is exactly 0', () => {
    const histogram = new DeviationHistogram();
    for (let k = 0; k < 1000; k++) histogram.add(0.01);
    expect(histogram.rms()).toBe(0);
  });

  it('of values spread wide around zero is their standard deviation', () => {
    const values = uniforms(10_000, 3).map((u) => 1e-3 * u);
    const histogram = new DeviationHistogram();
    for (const x of values) histogram.add(x);
    expect(Math.abs(histogram.rms()! / twoPassSpread(values) - 1)).toBeLessThan(1e-9);
  });
});
