// Latency histograms: integer nanoseconds into an HDR histogram (hdr-histogram-js), never a
// list of samples. Percentiles come from the histogram's buckets; count, sum, min and max are
// kept exactly beside it. Histograms of the same layout add bucket by bucket, so a merge of
// shards gives the very percentiles a single run over the same events would.
//
// Layout of one recorder: 3 significant digits (a bucket is at most 0.1 % wide), values from
// 1 ns to 1 hour (auto-resized beyond), 64-bit counts. Encoded form (JSON):
//   { count, sumNs, minNs, maxNs, hdr }  with hdr the standard compressed base64 HDR encoding,
//   readable by any HdrHistogram implementation.

import hdr from 'hdr-histogram-js';
import type { Histogram } from 'hdr-histogram-js';

const SIGNIFICANT_DIGITS = 3;
const HIGHEST_TRACKABLE_NS = 3600e9;

/** The part of hdr-histogram-js's plain JavaScript histogram that recordedBuckets() reads (not in its public type). */
interface CountsArray {
  countsArrayLength: number;
  totalCount: number;
  getCountAtIndex(index: number): number;
  valueFromIndex(index: number): number;
  highestEquivalentValue(value: number): number;
}

/**
 * The buckets holding values, ascending: each bucket's highest equivalent value and its count,
 * as the library's recorded-values iterator gives them, read straight off the counts array
 * (the iterator costs ~100 times more per bucket; a summary walks some thirty histograms).
 */
export function recordedBuckets(histogram: Histogram): { valuesNs: number[]; counts: number[] } {
  const counts = histogram as unknown as CountsArray;
  const valuesNs: number[] = [];
  const bucketCounts: number[] = [];
  const total = counts.totalCount;
  let seen = 0;
  for (let index = 0; index < counts.countsArrayLength && seen < total; index++) {
    const count = counts.getCountAtIndex(index);
    if (count === 0) continue;
    seen += count;
    valuesNs.push(counts.highestEquivalentValue(counts.valueFromIndex(index)));
    bucketCounts.push(count);
  }
  return { valuesNs, counts: bucketCounts };
}

export interface EncodedLatency {
  count: number;
  sumNs: number;
  minNs: number;
  maxNs: number;
  hdr: string;
}

/**
 * The figures trigger engineers read, in microseconds. With no events measured every figure
 * is null, never 0: a reader must not take "nothing measured" for "within any budget".
 */
export interface LatencyStats {
  count: number;
  p50_us: number | null;
  p90_us: number | null;
  p99_us: number | null;
  p999_us: number | null;
  max_us: number | null;
  mean_us: number | null;
}

function newHistogram(): Histogram {
  return hdr.build({
    bitBucketSize: 64,
    autoResize: true,
    lowestDiscernibleValue: 1,
    highestTrackableValue: HIGHEST_TRACKABLE_NS,
    numberOfSignificantValueDigits: SIGNIFICANT_DIGITS,
    useWebAssembly: false,
  });
}

export class LatencyRecorder {
  private histogram: Histogram = newHistogram();
  count = 0;
  sumNs = 0;
  minNs = Infinity;
  maxNs = 0;

  /** Records one value; non-integer input is rounded, negative input (clock skew) counts as 0. */
  recordNs(valueNs: number): void {
    let value = Math.round(valueNs);
    if (!(value > 0)) value = 0;
    this.histogram.recordValue(value);
    this.count++;
    this.sumNs += value;
    if (value < this.minNs) this.minNs = value;
    if (value > this.maxNs) this.maxNs = value;
  }

  /**
   * Value at a percentile in ns: the highest value of the bucket holding it, but never above
   * the exact maximum (the top bucket reaches past it); 0 when empty.
   */
  percentileNs(percentile: number): number {
    if (this.count === 0) return 0;
    return Math.min(this.histogram.getValueAtPercentile(percentile), this.maxNs);
  }

  /**
   * The recorded values bucket by bucket, ascending: each bucket's value as percentileNs gives
   * it (its highest equivalent value, never above the maximum) and how many values it holds.
   */
  buckets(): { valuesNs: Float64Array; counts: Float64Array } {
    const { valuesNs, counts } = recordedBuckets(this.histogram);
    for (let k = 0; k < valuesNs.length; k++) valuesNs[k] = Math.min(valuesNs[k], this.maxNs);
    return { valuesNs: Float64Array.from(valuesNs), counts: Float64Array.from(counts) };
  }

  meanNs(): number {
    return this.count === 0 ? 0 : this.sumNs / this.count;
  }

  /** Adds every value of another recorder to this one. */
  merge(other: LatencyRecorder): void {
    if (other.count === 0) return;
    this.histogram.add(other.histogram);
    this.count += other.count;
    this.sumNs += other.sumNs;
    if (other.minNs < this.minNs) this.minNs = other.minNs;
    if (other.maxNs > this.maxNs) this.maxNs = other.maxNs;
  }

  stats(): LatencyStats {
    if (this.count === 0) {
      return { count: 0, p50_us: null, p90_us: null, p99_us: null, p999_us: null, max_us: null, mean_us: null };
    }
    return {
      count: this.count,
      p50_us: this.percentileNs(50) / 1000,
      p90_us: this.percentileNs(90) / 1000,
      p99_us: this.percentileNs(99) / 1000,
      p999_us: this.percentileNs(99.9) / 1000,
      max_us: this.maxNs / 1000,
      mean_us: this.meanNs() / 1000,
    };
  }

  encode(): EncodedLatency {
    return {
      count: this.count,
      sumNs: this.sumNs,
      minNs: this.count === 0 ? 0 : this.minNs,
      maxNs: this.maxNs,
      hdr: hdr.encodeIntoCompressedBase64(this.histogram),
    };
  }

  static decode(encoded: EncodedLatency, where = 'histogram'): LatencyRecorder {
    const recorder = new LatencyRecorder();
    if (!encoded || typeof encoded.hdr !== 'string' || !Number.isInteger(encoded.count) || encoded.count < 0) {
      throw new Error(`${where}: not an encoded latency histogram`);
    }
    if (encoded.count === 0) return recorder;
    const decoded = hdr.decodeFromCompressedBase64(encoded.hdr, 64, false);
    if (decoded.totalCount !== encoded.count) {
      throw new Error(`${where}: histogram holds ${decoded.totalCount} values but count says ${encoded.count}`);
    }
    recorder.histogram.add(decoded);
    recorder.count = encoded.count;
    recorder.sumNs = encoded.sumNs;
    recorder.minNs = encoded.minNs;
    recorder.maxNs = encoded.maxNs;
    return recorder;
  }
}
