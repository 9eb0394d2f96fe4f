// DeviationHistogram: signed values over many decades (the pt response, ΔR) in flat memory, with
// exact count, mean, RMS, min and max, and quantiles to a bin's precision.
//
// Layout: one Float64Array of counts; bins are logarithmic in |x| with BINS_PER_DECADE per
// decade over [1e-18, 1e3), |x| below folded into the first bin and above into the last; index
// layout [negative bins, most negative first | zero | positive bins]. Quantiles are the
// geometric centre of the bin holding the rank, clamped to the exact min and max, so their
// relative precision is about 10^(1/50) - 1 ≈ 4.7 % of |x|.

const DECADE_LOW = -18;
const DECADE_HIGH = 3;
const BINS_PER_DECADE = 50;
const SIDE_BINS = (DECADE_HIGH - DECADE_LOW) * BINS_PER_DECADE;
const QUANTILES = [0.01, 0.05, 0.16, 0.5, 0.84, 0.95, 0.99] as const;
const QUANTILE_NAMES = ['p01', 'p05', 'p16', 'p50', 'p84', 'p95', 'p99'] as const;

export type Quantiles = Record<(typeof QUANTILE_NAMES)[number], number | null>;

export interface DistributionSummary {
  count: number;
  mean: number | null;
  rms: number | null;
  min: number | null;
  max: number | null;
  quantiles: Quantiles;
}

/** Signed values over many decades, flat memory; see the layout note at the top. */
export class DeviationHistogram {
  readonly counts = new Float64Array(2 * SIDE_BINS + 1);
  count = 0;
  nanCount = 0;
  private sum = 0;
  // running mean and sum of squared deviations from it (Welford's update, B. P. Welford,
  // Technometrics 4 (1962) 419, from memory): a plain sum of squares minus the squared mean loses every
  // digit of a spread far below the mean, e.g. a 1 % pt offset known to 1e-9
  private runningMean = 0;
  private squaredDeviations = 0;
  min = Infinity;
  max = -Infinity;

  add(x: number): void {
    if (Number.isNaN(x)) { this.nanCount++; return; }
    this.count++;
    this.sum += x;
    const delta = x - this.runningMean;
    this.runningMean += delta / this.count;
    this.squaredDeviations += delta * (x - this.runningMean);
    if (x < this.min) this.min = x;
    if (x > this.max) this.max = x;
    this.counts[binOf(x)]++;
  }

  mean(): number | null {
    return this.count > 0 ? this.sum / this.count : null;
  }

  /** spread about the mean (the standard deviation of the values) */
  rms(): number | null {
    if (this.count === 0) return null;
    return Math.sqrt(Math.max(0, this.squaredDeviations / this.count));
  }

  /** the value of rank q * (count - 1), to the bin's precision; null when empty */
  quantile(q: number): number | null {
    if (this.count === 0) return null;
    const rank = q * (this.count - 1);
    let cumulative = 0;
    for (let b = 0; b < this.counts.length; b++) {
      cumulative += this.counts[b];
      if (cumulative > rank) return Math.min(this.max, Math.max(this.min, centreOf(b)));
    }
    return this.max;
  }

  /** shifted by `offset` (the response is reported as 1 + x) */
  summary(offset = 0): DistributionSummary {
    const quantiles = {} as Quantiles;
    QUANTILES.forEach((q, k) => {
      const value = this.quantile(q);
      quantiles[QUANTILE_NAMES[k]] = value === null ? null : offset + value;
    });
    const mean = this.mean();
    return {
      count: this.count,
      mean: mean === null ? null : offset + mean,
      rms: this.rms(),
      min: this.count > 0 ? offset + this.min : null,
      max: this.count > 0 ? offset + this.max : null,
      quantiles,
    };
  }
}

function binOf(x: number): number {
  if (x === 0) return SIDE_BINS;
  const magnitude = Math.abs(x);
  let step = Math.floor((Math.log10(magnitude) - DECADE_LOW) * BINS_PER_DECADE);
  if (step < 0) step = 0;
  if (step >= SIDE_BINS) step = SIDE_BINS - 1;
  return x > 0 ? SIDE_BINS + 1 + step : SIDE_BINS - 1 - step;
}

function centreOf(bin: number): number {
  if (bin === SIDE_BINS) return 0;
  const step = bin > SIDE_BINS ? bin - SIDE_BINS - 1 : SIDE_BINS - 1 - bin;
  const magnitude = Math.pow(10, DECADE_LOW + (step + 0.5) / BINS_PER_DECADE);
  return bin > SIDE_BINS ? magnitude : -magnitude;
}
