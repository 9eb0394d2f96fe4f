// The soak's verdicts (bench/soak.ts): whether resident memory stayed flat, and whether
// latency drifted between the first and the last tenth of the events beyond the noise
// between tenths. Pure functions of the samples, so a test can hold them to their rules.

import { RisingLine } from '../host/measure/rising-line.js';

/** the last tenth's mean RSS may differ from the middle tenth's by at most this fraction */
export const FLAT_FRACTION = 0.05;
/** a fitted rise of latency over the tenths counts as drift when above this many residual standard deviations ... */
export const DRIFT_NOISE_FACTOR = 3;
/** ... and above this fraction of the tenths' median (a significant but tiny rise is no drift) */
export const DRIFT_MIN_FRACTION = 0.1;

export interface MemoryVerdict {
  samples: number;
  /** mean RSS of the first, middle and last tenth of the samples, MiB */
  firstTenthMiB: number;
  middleTenthMiB: number;
  lastTenthMiB: number;
  maxMiB: number;
  /** (last - middle) / middle */
  change: number;
  flat: boolean;
  rule: string;
}

const mean = (values: readonly number[]) => values.reduce((sum, x) => sum + x, 0) / values.length;

/**
 * Flat: the mean of the last tenth of the samples lies within FLAT_FRACTION of the mean of
 * the middle tenth (the middle, not the first: start-up fills the heap and the pools first).
 * Each tenth holds at least one sample.
 */
export function memoryVerdict(rssMiB: readonly number[]): MemoryVerdict {
  const n = rssMiB.length;
  if (n === 0) throw new Error('soak: no memory samples');
  const tenth = Math.max(1, Math.round(n / 10));
  const middleStart = Math.max(0, Math.floor(n / 2 - tenth / 2));
  const first = rssMiB.slice(0, tenth);
  const middle = rssMiB.slice(middleStart, middleStart + tenth);
  const last = rssMiB.slice(n - tenth);
  const middleTenthMiB = mean(middle);
  const lastTenthMiB = mean(last);
  const change = (lastTenthMiB - middleTenthMiB) / middleTenthMiB;
  return {
    samples: n,
    firstTenthMiB: mean(first),
    middleTenthMiB,
    lastTenthMiB,
    maxMiB: Math.max(...rssMiB),
    change,
    flat: Math.abs(change) <= FLAT_FRACTION,
    rule: `mean RSS of the last tenth of the samples within ${FLAT_FRACTION * 100} % of the middle tenth's (${tenth} samples each)`,
  };
}

export interface DriftVerdict {
  /** the figure in each tenth of the events, µs */
  tenthsUs: number[];
  /** rise of a least-squares line through the tenths, from the first to the last, µs */
  fittedRiseUs: number;
  /** standard deviation of the tenths around that line, µs: the noise between tenths */
  residualUs: number;
  /** last tenth over first tenth */
  lastOverFirst: number;
  drift: boolean;
  rule: string;
}

/**
 * Drift: a straight line fitted to the ten tenths rises (or falls) by more than
 * DRIFT_NOISE_FACTOR standard deviations of the tenths around it and by more than
 * DRIFT_MIN_FRACTION of their median. With ten points the fitted rise's standard error is
 * about one residual standard deviation, so the first test is roughly a 3-sigma slope.
 */
export function driftVerdict(tenthsUs: readonly number[]): DriftVerdict {
  const values = tenthsUs.filter((x) => Number.isFinite(x));
  const n = values.length;
  const rule = `fitted rise over the tenths above ${DRIFT_NOISE_FACTOR} residual standard deviations and above ${DRIFT_MIN_FRACTION * 100} % of the median tenth`;
  if (n < 3) return { tenthsUs: [...tenthsUs], fittedRiseUs: NaN, residualUs: NaN, lastOverFirst: NaN, drift: false, rule: `${rule} (too few tenths to judge)` };
  const meanX = (n - 1) / 2;
  const meanY = mean(values);
  const line = new RisingLine();
  for (const value of values) line.add(value);
  // the least-squares line passes through (meanX, meanY)
  const slope = line.slope();
  let squares = 0;
  for (let x = 0; x < n; x++) squares += (values[x] - (meanY + slope * (x - meanX))) ** 2;
  const residualUs = Math.sqrt(squares / (n - 2));
  const fittedRiseUs = slope * (n - 1);
  const median = [...values].sort((a, b) => a - b)[Math.floor(n / 2)];
  return {
    tenthsUs: [...tenthsUs],
    fittedRiseUs,
    residualUs,
    lastOverFirst: values[n - 1] / values[0],
    drift: Math.abs(fittedRiseUs) > DRIFT_NOISE_FACTOR * residualUs && Math.abs(fittedRiseUs) > DRIFT_MIN_FRACTION * median,
    rule,
  };
}
