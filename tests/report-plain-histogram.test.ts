// The summary's plain latency tables (measure/plain-histogram.ts): read without the HDR library,
// they must say what the histogram says.

import { describe, expect, it } from 'vitest';
import { LatencyRecorder } from '../host/measure/latency.js';
import { BINS_PER_DECADE, plainHistogram, plainHistograms } from '../host/measure/plain-histogram.js';

function recorderOf(valuesNs: number[]): LatencyRecorder {
  const recorder = new LatencyRecorder();
  for (const value of valuesNs) recorder.recordNs(value);
  return recorder;
}

describe('plain latency histogram', () => {
  it('puts every value in the log bin that holds it, counts adding up', () => {
    const values = [1500, 1500, 2500, 90_000, 1_000_000, 7];
    const plain = plainHistogram(recorderOf(values).encode());
    expect(plain.count).toBe(values.length);
    expect(plain.bins.reduce((sum, bin) => sum + bin.count, 0)).toBe(values.length);
    for (const valueNs of values) {
      const us = valueNs / 1000;
      const holding = plain.bins.filter((bin) => bin.lowUs <= us * 1.001 && us < bin.highUs * 1.001);
      expect(holding.length, `bin of ${us} us`).toBeGreaterThanOrEqual(1);
    }
    for (const bin of plain.bins) expect(Math.log10(bin.highUs / bin.lowUs)).toBeCloseTo(1 / BINS_PER_DECADE, 2);
  });

  it('gives the same percentiles as the recorder', () => {
    const values = Array.from({ length: 1000 }, (_, k) => 1000 + 37 * k * k);
    const recorder = recorderOf(values);
    const plain = plainHistogram(recorder.encode());
    const p99 = plain.percentiles.find((row) => row.percentile === 99)!;
    expect(p99.us).toBe(recorder.percentileNs(99) / 1000);
    expect(plain.percentiles.at(-1)!.us).toBe(recorder.maxNs / 1000);
  });

  it('is empty for no events, covers nested stage histograms and leaves out tower counts', () => {
    const empty = new LatencyRecorder().encode();
    expect(plainHistogram(empty)).toMatchObject({ count: 0, percentiles: [], bins: [] });
    const tables = plainHistograms({ cluster: recorderOf([5000]).encode(), towersPerEvent: recorderOf([300]).encode(), stages: { decode: recorderOf([100]).encode() }, multiplicity: [] });
    expect(Object.keys(tables)).toEqual(['cluster', 'stages']);
    expect((tables.stages as Record<string, { count: number }>).decode.count).toBe(1);
  });
});
