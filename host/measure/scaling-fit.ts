// Service time against tower multiplicity N: a line through the multiplicity bins' medians on
// log-log axes gives the exponent alpha of time ∝ N^alpha, with an uncertainty from a seeded
// bootstrap over events. No alpha is given when N does not spread enough to fit one; the
// reason says so, and how to get spread on purpose (generate --pileup LOW:HIGH).

import { makeRandom } from '../random.js';
import { MULTIPLICITY_EDGES, type MultiplicityBins } from './multiplicity-fit.js';

/** One multiplicity bin as the summary shows it. */
export interface ScalingBin {
  /** lowest and highest N the bin holds (its edges, not the events' own extremes) */
  nLow: number;
  nHigh: number;
  events: number;
  p50_us: number;
  mean_us: number;
}

export type Scaling =
  | { alpha: number; alphaError: number; nMin: number; nMax: number; bins: ScalingBin[] }
  | { alpha: null; reason: string; nMin: number | null; nMax: number | null; bins: ScalingBin[] };

/** N must spread by at least this ratio (largest over smallest) for an exponent to mean anything. */
export const SCALING_MIN_SPREAD = 1.5;
/** A bin enters the fit with at least this many events: its median then moves by a few % at most. */
export const SCALING_MIN_BIN_EVENTS = 20;
/** Bins in the fit, at least: two points always lie on a line. */
export const SCALING_MIN_BINS = 3;
/** Bins of fewer towers than this stay out: their time is the engine's fixed cost, not its scaling. */
export const SCALING_MIN_TOWERS = 8;
/** Bootstrap replicates: the spread of alpha from 200 is good to about 5 % of itself. */
export const BOOTSTRAP_REPLICATES = 200;
/** The bootstrap's seed: a summary is the same for the same events, run after run. */
export const BOOTSTRAP_SEED = 20_011;

/** One bin's data for the fit: its edges, the mean N of its events, and its service times. */
export interface ScalingSample {
  nLow: number;
  nHigh: number;
  meanTowers: number;
  /** service times by bucket, ascending, and the events in each (LatencyRecorder.buckets) */
  valuesNs: Float64Array;
  counts: Float64Array;
  events: number;
  p50Ns: number;
  meanNs: number;
}

function binEdges(bin: number): [number, number] {
  if (bin === 0) return [0, 0];
  return [MULTIPLICITY_EDGES[bin - 1], (MULTIPLICITY_EDGES[bin] ?? Infinity) - 1];
}

/** The bins of a run's tally as fit input, lowest N first. */
export function scalingSamples(bins: MultiplicityBins): ScalingSample[] {
  const samples: ScalingSample[] = [];
  bins.recorders.forEach((recorder, bin) => {
    if (!recorder || recorder.count === 0) return;
    const [nLow, nHigh] = binEdges(bin);
    const { valuesNs, counts } = recorder.buckets();
    samples.push({
      nLow, nHigh, meanTowers: bins.sumTowers[bin] / recorder.count, valuesNs, counts,
      events: recorder.count, p50Ns: recorder.percentileNs(50), meanNs: recorder.meanNs(),
    });
  });
  return samples;
}

/** Least-squares slope of y on x; null when x does not vary. */
function slope(xs: readonly number[], ys: readonly number[]): number | null {
  const n = xs.length;
  let meanX = 0;
  let meanY = 0;
  for (let k = 0; k < n; k++) { meanX += xs[k]; meanY += ys[k]; }
  meanX /= n;
  meanY /= n;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < n; k++) {
    sxy += (xs[k] - meanX) * (ys[k] - meanY);
    sxx += (xs[k] - meanX) * (xs[k] - meanX);
  }
  return sxx > 0 ? sxy / sxx : null;
}

/** A standard normal draw (Box–Muller, from memory). */
function normal(random: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
}

/** A Gamma(shape, 1) draw for shape >= 1 (Marsaglia and Tsang, ACM TOMS 26 (2000) 363). */
function gamma(shape: number, random: () => number): number {
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    const x = normal(random);
    const v = (1 + c * x) ** 3;
    if (v <= 0) continue;
    if (Math.log(1 - random()) < 0.5 * x * x + d - d * v + d * Math.log(v)) return d * v;
  }
}

/**
 * Median of one resample of a bin's n events, without drawing them: the resample's ranks are
 * floor(n·U) of n uniforms U, so its median rank (the m-th smallest, m = ceil(n/2), the rank
 * HDR's p50 takes) is floor(n·U_(m)), and the m-th smallest of n uniforms is Beta(m, n-m+1)
 * distributed (order statistics, common practice), drawn as a ratio of two Gamma draws.
 */
function resampledMedianNs(sample: ScalingSample, cumulative: Float64Array, random: () => number): number {
  const n = sample.events;
  const m = Math.ceil(n / 2);
  const x = gamma(m, random);
  const y = gamma(n - m + 1, random);
  const rank = Math.min(n - 1, Math.floor((n * x) / (x + y)));
  // first bucket whose cumulative count passes the rank
  let lo = 0;
  let hi = cumulative.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (cumulative[mid] > rank) hi = mid; else lo = mid + 1;
  }
  return sample.valuesNs[lo];
}

function toBin(sample: ScalingSample): ScalingBin {
  return { nLow: sample.nLow, nHigh: sample.nHigh, events: sample.events, p50_us: sample.p50Ns / 1000, mean_us: sample.meanNs / 1000 };
}

/**
 * alpha: least-squares line through (ln mean N, ln median service time) of the bins with at
 * least SCALING_MIN_BIN_EVENTS events. The median, not the mean: a worker descheduled by the
 * system adds a tail that would tilt the line. alphaError: the standard deviation of alpha over
 * bootstrap replicates that resample each bin's events (bin counts held, so every replicate
 * fits the same bins). nMin, nMax: the exact range of N over the clustered events.
 */
export function fitScaling(samples: readonly ScalingSample[], nMin: number | null, nMax: number | null): Scaling {
  const bins = samples.map(toBin);
  const none = (reason: string): Scaling => ({ alpha: null, reason, nMin, nMax, bins });
  if (nMin === null || nMax === null) return none('no event was clustered');
  if (nMax < SCALING_MIN_SPREAD * nMin) {
    return none(`N spans only ${nMin}..${nMax} towers (max/min ${(nMax / Math.max(nMin, 1)).toFixed(2)}, a fit needs ${SCALING_MIN_SPREAD}); for spread, generate events with a pileup range (--pileup 50:250)`);
  }
  const used = samples.filter((s) => s.events >= SCALING_MIN_BIN_EVENTS && s.meanTowers >= SCALING_MIN_TOWERS && s.p50Ns > 0);
  if (used.length < SCALING_MIN_BINS) {
    return none(`${used.length} multiplicity bin${used.length === 1 ? '' : 's'} of ${SCALING_MIN_TOWERS}+ towers hold ${SCALING_MIN_BIN_EVENTS}+ events, a fit needs ${SCALING_MIN_BINS}; for spread, generate events with a pileup range (--pileup 50:250)`);
  }
  const low = used[0].meanTowers;
  const high = used[used.length - 1].meanTowers;
  if (high < SCALING_MIN_SPREAD * low) {
    return none(`the bins with ${SCALING_MIN_BIN_EVENTS}+ events span only mean N ${low.toFixed(0)}..${high.toFixed(0)} (a fit needs a ratio of ${SCALING_MIN_SPREAD}); for spread, generate events with a pileup range (--pileup 50:250)`);
  }
  const xs = used.map((s) => Math.log(s.meanTowers));
  const alpha = slope(xs, used.map((s) => Math.log(s.p50Ns)));
  if (alpha === null) return none('the bins do not differ in N');

  const random = makeRandom(BOOTSTRAP_SEED);
  const cumulatives = used.map((s) => {
    const cumulative = new Float64Array(s.counts.length);
    let total = 0;
    for (let k = 0; k < s.counts.length; k++) { total += s.counts[k]; cumulative[k] = total; }
    return cumulative;
  });
  const ys = new Array<number>(used.length);
  let sum = 0;
  let sumSquares = 0;
  for (let replicate = 0; replicate < BOOTSTRAP_REPLICATES; replicate++) {
    for (let b = 0; b < used.length; b++) ys[b] = Math.log(Math.max(resampledMedianNs(used[b], cumulatives[b], random), 1));
    const replicateAlpha = slope(xs, ys)!;
    sum += replicateAlpha;
    sumSquares += replicateAlpha * replicateAlpha;
  }
  const meanAlpha = sum / BOOTSTRAP_REPLICATES;
  const variance = Math.max(0, sumSquares / BOOTSTRAP_REPLICATES - meanAlpha * meanAlpha) * BOOTSTRAP_REPLICATES / (BOOTSTRAP_REPLICATES - 1);
  return { alpha, alphaError: Math.sqrt(variance), nMin, nMax, bins };
}
