import { describe, expect, it } from 'vitest';
import { LatencyRecorder } from '../host/measure/latency.js';
import { ArrivalSchedule } from '../host/pipeline/arrivals.js';
import { RisingLine } from '../host/measure/rising-line.js';
import { makeRandom } from '../host/random.js';

/** skewed latencies of the shape clustering times have: a body and a long tail */
function sampleLatenciesNs(count: number, seed: number): number[] {
  const uniform = makeRandom(seed);
  const values: number[] = [];
  for (let k = 0; k < count; k++) {
    const body = 200_000 * Math.exp(0.4 * Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform()));
    values.push(Math.round(uniform() < 0.01 ? body * 20 : body));
  }
  return values;
}

function recorderOf(values: readonly number[]): LatencyRecorder {
  const recorder = new LatencyRecorder();
  for (const v of values) recorder.recordNs(v);
  return recorder;
}

describe('latency histograms', () => {
  const values = sampleLatenciesNs(20_000, 7);

  it('give percentiles within 0.1 % of the exact order statistic (3 significant digits, HdrHistogram docs, from memory)', () => {
    const recorder = recorderOf(values);
    const sorted = [...values].sort((a, b) => a - b);
    for (const percentile of [50, 90, 99, 99.9]) {
      // rank ceil(p/100 * n), with p/100 * n rounded first so 99.9 % of 20000 is rank 19980, not 19981
      const exact = sorted[Math.ceil(Math.round((percentile / 100) * sorted.length * 1e6) / 1e6) - 1];
      const fromHistogram = recorder.percentileNs(percentile);
      expect(Math.abs(fromHistogram - exact) / exact).toBeLessThanOrEqual(1e-3);
    }
  });

  it('keep count, sum, min and max exactly', () => {
    const recorder = recorderOf(values);
    expect(recorder.count).toBe(values.length);
    expect(recorder.sumNs).toBe(values.reduce((a, b) => a + b, 0));
    expect(recorder.minNs).toBe(Math.min(...values));
    expect(recorder.maxNs).toBe(Math.max(...values));
  });

  it('merged from two halves give exactly the percentiles of one histogram of all values', () => {
    const whole = recorderOf(values);
    const merged = recorderOf(values.filter((_, k) => k % 3 === 0));
    merged.merge(recorderOf(values.filter((_, k) => k % 3 !== 0)));
    expect(merged.stats()).toEqual(whole.stats());
    for (let percentile = 0.5; percentile < 100; percentile += 0.5) {
      expect(merged.percentileNs(percentile)).toBe(whole.percentileNs(percentile));
    }
  });

  it('survive encoding to JSON and back unchanged', () => {
    const recorder = recorderOf(values);
    const decoded = LatencyRecorder.decode(JSON.parse(JSON.stringify(recorder.encode())));
    expect(decoded.stats()).toEqual(recorder.stats());
    expect(decoded.encode()).toEqual(recorder.encode());
  });

  it('decode an empty recorder to an empty one whose figures are null, not zero', () => {
    const decoded = LatencyRecorder.decode(new LatencyRecorder().encode());
    expect(decoded.count).toBe(0);
    expect(decoded.stats()).toEqual({ count: 0, p50_us: null, p90_us: null, p99_us: null, p999_us: null, max_us: null, mean_us: null });
  });

  it('refuse an encoding whose count disagrees with its buckets', () => {
    const encoded = recorderOf([1000, 2000, 3000]).encode();
    expect(() => LatencyRecorder.decode({ ...encoded, count: 4 }, 'a.json')).toThrow('a.json: histogram holds 3 values but count says 4');
  });
});

describe('arrival schedules', () => {
  it('space fixed-rate events exactly 1/rate apart', () => {
    const schedule = new ArrivalSchedule({ kind: 'fixed', rateHz: 4000 });
    expect([0, 1, 2, 3, 4].map(() => schedule.next())).toEqual([0, 250_000, 500_000, 750_000, 1_000_000]);
  });

  it('give the same Poisson arrivals for the same seed and different ones for another', () => {
    const take = (seed: number) => {
      const schedule = new ArrivalSchedule({ kind: 'poisson', rateHz: 1000, seed });
      return Array.from({ length: 50 }, () => schedule.next());
    };
    expect(take(3)).toEqual(take(3));
    expect(take(3)).not.toEqual(take(4));
  });

  it('give Poisson gaps with mean and standard deviation 1/rate (exponential law, common practice)', () => {
    const schedule = new ArrivalSchedule({ kind: 'poisson', rateHz: 10_000, seed: 11 });
    const count = 50_000;
    let previous = 0;
    let sum = 0;
    let sumSquares = 0;
    for (let k = 0; k < count; k++) {
      const at = schedule.next();
      const gap = at - previous;
      expect(gap).toBeGreaterThanOrEqual(0);
      previous = at;
      sum += gap;
      sumSquares += gap * gap;
    }
    const mean = sum / count;
    const sd = Math.sqrt(sumSquares / count - mean * mean);
    // standard error of the mean is 100 µs / sqrt(50000) ≈ 0.45 µs; allow about 4 of them
    expect(Math.abs(mean - 100_000)).toBeLessThan(2_000);
    expect(Math.abs(sd - 100_000)).toBeLessThan(3_000);
  });

  it('refuse a rate that is not a positive number', () => {
    expect(() => new ArrivalSchedule({ kind: 'fixed', rateHz: 0 })).toThrow('positive finite');
  });
});

/** How much a least-squares line through the values rises from the first to the last. */
function fittedRise(values: readonly number[]): number {
  const line = new RisingLine();
  for (const y of values) line.add(y);
  return line.rise();
}

describe('the backlog trend of an open loop', () => {
  it('rises by the ramp\'s height for a steady ramp, and little for one late pile-up that drains', () => {
    const ramp = Array.from({ length: 101 }, (_, k) => 0.5 * k);
    expect(fittedRise(ramp)).toBeCloseTo(50, 9);
    // 60 results with no backlog but a pile-up of 5 events near the end (a stalled machine)
    const spike = Array.from({ length: 60 }, (_, k) => (k >= 52 && k < 57 ? 57 - k : 0));
    expect(fittedRise(spike)).toBeLessThan(3);
  });
});
