// Service time against tower multiplicity N: events are binned by N (four bins per doubling) and
// each bin keeps a latency histogram; bins of shards add exactly, and the fit of time ∝ N^alpha
// (scaling-fit.ts) is made from them, so a merge refits rather than averages.

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

/** Per-event service time against tower multiplicity N (towers that entered clustering). */
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
