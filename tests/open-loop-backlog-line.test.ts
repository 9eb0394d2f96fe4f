// The open loop's backlog trend is a least-squares line kept as running sums (RisingLine), so a
// long run keeps no value per event; over millions of results the sums must still give the
// line's rise, which a steady ramp knows in advance.

import { describe, expect, it } from 'vitest';
import { RisingLine } from '../host/measure/rising-line.js';

describe('RisingLine', () => {
  it('gives the rise of a ramp of three million values to a millionth of it', () => {
    const line = new RisingLine();
    const count = 3_000_000;
    // a backlog climbing by 1 event every 1000 results, with a sawtooth of 0..9 on top
    for (let k = 0; k < count; k++) line.add(Math.floor(k / 1000) + (k % 10));
    const expected = (count - 1) / 1000;
    expect(Math.abs(line.rise() - expected) / expected).toBeLessThan(1e-6);
  });

  it('gives no rise for fewer than two values', () => {
    const line = new RisingLine();
    expect(line.rise()).toBe(0);
    line.add(5);
    expect(line.rise()).toBe(0);
  });
});
