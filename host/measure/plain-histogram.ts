// Latency histograms in a form any tool reads without an HDR histogram library: a percentile
// table and bin counts on logarithmic bins, both in microseconds. The summary keeps the
// compressed HDR encoding (latency.ts) beside them for exact merges; this form is for reading
// and plotting only.
//
//   { unit: 'us', percentiles: [{ percentile, us }], binsPerDecade, bins: [{ lowUs, highUs, count }] }
//
// Bins: BINS_PER_DECADE per decade of microseconds, edges at 10^(k / BINS_PER_DECADE) µs, only
// the bins that hold events listed, in increasing order; their counts add up to the
// histogram's count. A value goes to the bin of its HDR bucket's highest equivalent value,
// clamped to the exact maximum, the same value the percentiles report (latency.ts), so a bin
// is placed to the HDR precision (0.1 %) of its values.

import hdr from 'hdr-histogram-js';
import type { JsHistogram } from 'hdr-histogram-js';
import { recordedBuckets, type EncodedLatency } from './latency.js';

export const BINS_PER_DECADE = 20;
export const PLAIN_PERCENTILES = [1, 5, 10, 25, 50, 75, 90, 95, 99, 99.5, 99.9, 99.99, 100] as const;

export interface PlainHistogram {
  unit: 'us';
  count: number;
  percentiles: { percentile: number; us: number }[];
  binsPerDecade: number;
  bins: { lowUs: number; highUs: number; count: number }[];
}

/** The edge k of the log bins, in µs, rounded to 4 significant digits for a readable JSON. */
function edgeUs(k: number): number {
  return Number((10 ** (k / BINS_PER_DECADE)).toPrecision(4));
}

/** An encoded latency histogram as percentile table and log-bin counts; empty tables for no events. */
export function plainHistogram(encoded: EncodedLatency): PlainHistogram {
  const plain: PlainHistogram = { unit: 'us', count: encoded.count, percentiles: [], binsPerDecade: BINS_PER_DECADE, bins: [] };
  if (!encoded || encoded.count === 0) return plain;
  const histogram = hdr.decodeFromCompressedBase64(encoded.hdr, 64, false) as JsHistogram;
  for (const percentile of PLAIN_PERCENTILES) {
    const ns = Math.min(histogram.getValueAtPercentile(percentile), encoded.maxNs);
    plain.percentiles.push({ percentile, us: ns / 1000 });
  }
  const counts = new Map<number, number>();
  const buckets = recordedBuckets(histogram);
  for (let k = 0; k < buckets.valuesNs.length; k++) {
    const valueUs = Math.min(buckets.valuesNs[k], encoded.maxNs) / 1000;
    // values below 1 ns (0) go to the lowest bin of a nanosecond
    const bin = Math.floor(Math.log10(Math.max(valueUs, 1e-3)) * BINS_PER_DECADE + 1e-9);
    counts.set(bin, (counts.get(bin) ?? 0) + buckets.counts[k]);
  }
  for (const bin of [...counts.keys()].sort((a, b) => a - b)) {
    plain.bins.push({ lowUs: edgeUs(bin), highUs: edgeUs(bin + 1), count: counts.get(bin)! });
  }
  return plain;
}

/** Histograms of a summary that hold no times (towers per event is a count). */
const NOT_TIMES = new Set(['towersPerEvent']);

/** Every latency histogram of a summary's `histograms`, by the same names (stages included). */
export function plainHistograms(histograms: Record<string, unknown>): Record<string, PlainHistogram | Record<string, PlainHistogram>> {
  const out: Record<string, PlainHistogram | Record<string, PlainHistogram>> = {};
  for (const [name, value] of Object.entries(histograms)) {
    if (NOT_TIMES.has(name)) continue;
    if (isEncoded(value)) out[name] = plainHistogram(value);
    else if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
      const inner: Record<string, PlainHistogram> = {};
      for (const [innerName, innerValue] of Object.entries(value)) if (isEncoded(innerValue)) inner[innerName] = plainHistogram(innerValue);
      if (Object.keys(inner).length > 0) out[name] = inner;
    }
  }
  return out;
}

export function isEncoded(value: unknown): value is EncodedLatency {
  return value !== null && typeof value === 'object' && typeof (value as EncodedLatency).hdr === 'string' && Number.isInteger((value as EncodedLatency).count);
}
