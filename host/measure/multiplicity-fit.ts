// Clustering time against tower multiplicity N: events are binned by N (four bins per doubling),
// each bin keeps a latency histogram, and a line through the bins' medians on log-log axes gives
// the exponent alpha of time ∝ N^alpha.

import { LatencyRecorder } from './latency.js';

/**
 * Lower edges of the multiplicity bins: four per doubling of N (ceil(2^(j/4)), repeats
 * dropped), so that even a file whose events all have similar N spans a few bins for the fit.
 * Bin 0 holds N = 0; bin b >= 1 holds MULTIPLICITY_EDGES[b-1] <= N < MULTIPLICITY_EDGES[b].
 */
export const MULTIPLICITY_EDGES: readonly number[] = (() => {
  const edges: number[] = [];
  for (let j = 0; j <= 4 * 23; j++) {
    const edge = Math.ceil(2 ** (j / 4) - 1e-9);
    if (edges[edges.length - 1] !== edge) edges.push(edge);
  }
  return edges;
})();

/** Per-event clustering time against tower multiplicity N (towers that entered clustering). */
export class MultiplicityBins {
  readonly recorders: (LatencyRecorder | undefined)[] = [];
  readonly sumTowers: number[] = [];

  static binOf(towers: number): number {
    if (towers <= 0) return 0;
    // the last edge not above N, by bisection
    let lo = 0;
    let hi = MULTIPLICITY_EDGES.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (MULTIPLICITY_EDGES[mid] <= towers) lo = mid; else hi = mid - 1;
    }
    return lo + 1;
  }

  record(towers: number, clusterNs: number): void {
    const bin = MultiplicityBins.binOf(towers);
    let recorder = this.recorders[bin];
    if (!recorder) {
      recorder = this.recorders[bin] = new LatencyRecorder();
      this.sumTowers[bin] = 0;
    }
    recorder.recordNs(clusterNs);
    this.sumTowers[bin] += towers;
  }

  merge(other: MultiplicityBins): void {
    other.recorders.forEach((recorder, bin) => {
      if (!recorder) return;
      if (!this.recorders[bin]) {
        this.recorders[bin] = new LatencyRecorder();
        this.sumTowers[bin] = 0;
      }
      this.recorders[bin]!.merge(recorder);
      this.sumTowers[bin] += other.sumTowers[bin];
    });
  }
}

export interface MultiplicityBin {
  towersMin: number;
  towersMax: number;
  count: number;
  meanTowers: number;
  mean_us: number;
  p50_us: number;
  p99_us: number;
}

export interface MultiplicityFit {
  /** fitted exponent of time ∝ N^alpha; null with fewer than two usable bins */
  alpha: number | null;
  /** bins with at least this many events and mean N >= FIT_MIN_TOWERS enter the fit */
  binsUsed: number;
}

const FIT_MIN_EVENTS = 3;
const FIT_MIN_TOWERS = 8;

/**
 * Least-squares line through (ln mean N, ln median time) of the usable bins. The median, not
 * the mean: a worker descheduled by the system adds a tail that would tilt the line.
 */
export function fitMultiplicity(bins: readonly MultiplicityBin[]): MultiplicityFit {
  const xs: number[] = [];
  const ys: number[] = [];
  for (const bin of bins) {
    if (bin.count < FIT_MIN_EVENTS || bin.meanTowers < FIT_MIN_TOWERS || !(bin.p50_us > 0)) continue;
    xs.push(Math.log(bin.meanTowers));
    ys.push(Math.log(bin.p50_us));
  }
  if (xs.length < 2) return { alpha: null, binsUsed: xs.length };
  const n = xs.length;
  const meanX = xs.reduce((a, b) => a + b, 0) / n;
  const meanY = ys.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < n; k++) {
    sxy += (xs[k] - meanX) * (ys[k] - meanY);
    sxx += (xs[k] - meanX) * (xs[k] - meanX);
  }
  return { alpha: sxx > 0 ? sxy / sxx : null, binsUsed: n };
}

function bucketRange(bin: number): [number, number] {
  if (bin === 0) return [0, 0];
  return [MULTIPLICITY_EDGES[bin - 1], (MULTIPLICITY_EDGES[bin] ?? Infinity) - 1];
}

export function multiplicityTable(bins: MultiplicityBins): MultiplicityBin[] {
  const table: MultiplicityBin[] = [];
  bins.recorders.forEach((recorder, bin) => {
    if (!recorder || recorder.count === 0) return;
    const [towersMin, towersMax] = bucketRange(bin);
    table.push({
      towersMin,
      towersMax,
      count: recorder.count,
      meanTowers: bins.sumTowers[bin] / recorder.count,
      mean_us: recorder.meanNs() / 1000,
      p50_us: recorder.percentileNs(50) / 1000,
      p99_us: recorder.percentileNs(99) / 1000,
    });
  });
  return table;
}
