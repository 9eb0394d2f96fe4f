// The soak's verdicts (bench/soak-figures.ts) on series made by hand: flatness compares the
// mean of the last tenth of the samples with the middle tenth's; drift compares a fitted rise
// over ten tenths with the scatter around it.

import { describe, expect, it } from 'vitest';
import { driftVerdict, memoryVerdict } from '../bench/soak-figures.js';

describe('memoryVerdict', () => {
  it('calls a series flat whose last tenth is 4 % above its middle tenth', () => {
    // 100 samples: 100 MiB, then 104 MiB in the last ten
    const series = Array.from({ length: 100 }, (_, k) => (k >= 90 ? 104 : 100));
    const verdict = memoryVerdict(series);
    expect(verdict.middleTenthMiB).toBe(100);
    expect(verdict.lastTenthMiB).toBe(104);
    expect(verdict.flat).toBe(true);
  });

  it('calls a series not flat whose last tenth is 6 % above its middle tenth', () => {
    const series = Array.from({ length: 100 }, (_, k) => (k >= 90 ? 106 : 100));
    expect(memoryVerdict(series).flat).toBe(false);
  });

  it('judges from the middle tenth, not the first: start-up growth is not a leak', () => {
    // 50 MiB at first, 100 MiB from the tenth sample on
    const series = Array.from({ length: 100 }, (_, k) => (k < 10 ? 50 : 100));
    const verdict = memoryVerdict(series);
    expect(verdict.firstTenthMiB).toBe(50);
    expect(verdict.flat).toBe(true);
  });
});

describe('driftVerdict', () => {
  it('finds drift in a steady rise of 30 % with little scatter', () => {
    const tenths = [100, 103, 107, 110, 113, 117, 120, 123, 127, 130];
    const verdict = driftVerdict(tenths);
    expect(verdict.fittedRiseUs).toBeCloseTo(30, 0);
    expect(verdict.drift).toBe(true);
  });

  it('finds none in tenths that only scatter', () => {
    const tenths = [100, 130, 95, 120, 105, 90, 125, 100, 110, 98];
    expect(driftVerdict(tenths).drift).toBe(false);
  });

  it('finds none in a rise well above the scatter but below a tenth of the median', () => {
    const tenths = [100, 100.5, 101, 101.5, 102, 102.5, 103, 103.5, 104, 104.5];
    expect(driftVerdict(tenths).drift).toBe(false);
  });
});
