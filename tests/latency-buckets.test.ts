// recordedBuckets reads a histogram's counts array directly; the oracle is the library's own
// recorded-values iterator (hdr-histogram-js), which walks the same buckets step by step.

import { describe, expect, it } from 'vitest';
import hdr from 'hdr-histogram-js';
import { recordedBuckets } from '../host/measure/latency.js';

describe('recordedBuckets', () => {
  it('gives the buckets and counts of the library iterator, in its order', () => {
    const histogram = hdr.build({ bitBucketSize: 64, autoResize: true, lowestDiscernibleValue: 1, highestTrackableValue: 3600e9, numberOfSignificantValueDigits: 3, useWebAssembly: false });
    let x = 7;
    for (let k = 0; k < 5000; k++) {
      x = (Math.imul(x, 1103515245) + 12345) >>> 0;
      // from 0 ns to tens of ms, with repeats, a spread like the run's latencies
      histogram.recordValue(k % 50 === 0 ? 0 : Math.floor((x / 4294967296) ** 3 * 3e7));
    }
    const expectedValues: number[] = [];
    const expectedCounts: number[] = [];
    const iterator = (histogram as unknown as { recordedValuesIterator: { reset(): void; hasNext(): boolean; next(): { valueIteratedTo: number; countAtValueIteratedTo: number } } }).recordedValuesIterator;
    iterator.reset();
    while (iterator.hasNext()) {
      const step = iterator.next();
      expectedValues.push(step.valueIteratedTo);
      expectedCounts.push(step.countAtValueIteratedTo);
    }
    const buckets = recordedBuckets(histogram);
    expect(buckets.valuesNs).toEqual(expectedValues);
    expect(buckets.counts).toEqual(expectedCounts);
    expect(buckets.counts.reduce((a, b) => a + b, 0)).toBe(5000);
  });
});
