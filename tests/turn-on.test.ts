// Turn-on curves (clustering-spec.md section 13) and the Clopper-Pearson intervals beneath them.

import { describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { CONFIDENCE_68, betaQuantile, clopperPearson, regularizedIncompleteBeta } from '../host/validate/beta-quantile.js';
import { TurnOnAccumulator, formatTurnOnCurves, levelCrossing } from '../host/validate/turn-on.js';
import { generateEvents } from '../host/generator/generate.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';

const ALPHA = 1 - 0.6827;
const relative = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

describe('Clopper-Pearson at 68.27 %', () => {
  it('uses 68.27 % as the confidence', () => {
    expect(CONFIDENCE_68).toBe(0.6827);
  });

  it.each([1, 2, 7, 100, 1000, 100000])('gives lower bound (alpha/2)^(1/n) and upper 1 when all %i events pass', (n) => {
    // closed form for k = n: I_x(n, 1) = x^n; Biometrika 26 (1934) 404
    const [low, high] = clopperPearson(n, n, CONFIDENCE_68);
    expect(relative(low, Math.pow(ALPHA / 2, 1 / n))).toBeLessThan(1e-13);
    expect(high).toBe(1);
  });

  it.each([1, 2, 7, 100, 1000, 100000])('gives upper bound 1 - (alpha/2)^(1/n) and lower 0 when none of %i events pass', (n) => {
    // closed form for k = 0: I_x(1, n) = 1 - (1-x)^n; Biometrika 26 (1934) 404. -expm1(log(.)/n)
    // is 1 - (alpha/2)^(1/n) without the cancellation of the subtraction at large n.
    const [low, high] = clopperPearson(0, n, CONFIDENCE_68);
    expect(low).toBe(0);
    expect(relative(high, -Math.expm1(Math.log(ALPHA / 2) / n))).toBeLessThan(1e-13);
  });

  // interior points against jstat 1.9.6 (npm, general-purpose statistics library): its beta
  // quantile stops Newton's method at 1e-8 relative, hence the tolerance
  it.each([[1, 10], [3, 7], [5, 10], [50, 100], [99, 100], [10, 1000], [250, 1000]])('agrees with jstat for %i of %i events', (k, n) => {
    const [low, high] = clopperPearson(k, n, CONFIDENCE_68);
    expect(relative(low, jStat.beta.inv(ALPHA / 2, k, n - k + 1))).toBeLessThan(1e-7);
    expect(relative(high, jStat.beta.inv(1 - ALPHA / 2, k + 1, n - k))).toBeLessThan(1e-7);
  });

  // for integer a, b the incomplete beta is a binomial tail, I_x(a, b) = P(X >= a) with
  // X ~ Binomial(a + b - 1, x) (DLMF 8.17.5): summed here term by term, exact to rounding
  const binomialTail = (x: number, a: number, b: number): number => {
    const n = a + b - 1;
    let sum = 0;
    let choose = 1; // C(n, j), built up from C(n, 0)
    for (let j = 0; j <= n; j++) {
      if (j >= a) sum += choose * x ** j * (1 - x) ** (n - j);
      choose = (choose * (n - j)) / (j + 1);
    }
    return sum;
  };
  it.each([[1, 10], [3, 7], [5, 10], [50, 100], [99, 100]])('puts alpha/2 in each tail, by the binomial sum, for %i of %i', (k, n) => {
    const [low, high] = clopperPearson(k, n, CONFIDENCE_68);
    expect(relative(binomialTail(low, k, n - k + 1), ALPHA / 2)).toBeLessThan(1e-12);
    expect(relative(binomialTail(high, k + 1, n - k), 1 - ALPHA / 2)).toBeLessThan(1e-12);
  });

  it('inverts its own incomplete beta', () => {
    for (const [p, a, b] of [[0.1, 2, 3], [0.5, 40, 60], [0.9, 0.5, 0.5], [0.3, 1e5, 2e5]]) {
      expect(regularizedIncompleteBeta(betaQuantile(p, a, b), a, b)).toBeCloseTo(p, 12);
    }
  });

  it('gives I_x(a, 1) = x^a and I_x(1, b) = 1 - (1-x)^b (from the definition)', () => {
    expect(relative(regularizedIncompleteBeta(0.3, 4, 1), 0.3 ** 4)).toBeLessThan(1e-13);
    expect(relative(regularizedIncompleteBeta(0.3, 1, 4), 1 - 0.7 ** 4)).toBeLessThan(1e-13);
  });
});

describe('levelCrossing', () => {
  it('interpolates between the bin before and the first bin to reach the level', () => {
    expect(levelCrossing([2.5, 7.5, 12.5], [0.1, 0.3, 0.7], 0.5)).toBeCloseTo(7.5 + (0.2 * 5) / 0.4, 12);
  });

  it('gives the first bin its own centre', () => {
    expect(levelCrossing([12.5, 17.5], [0.6, 1], 0.5)).toBe(12.5);
  });

  it('gives null when no bin reaches the level', () => {
    expect(levelCrossing([2.5, 7.5], [0.2, 0.94], 0.95)).toBeNull();
  });
});

/** one event's jets as a decreasing pt array */
const pts = (...values: number[]): Float64Array => Float64Array.from(values);

describe('TurnOnAccumulator', () => {
  it('bins by the reference leading jet and passes on the candidate leading jet, in any order', () => {
    const curve = new TurnOnAccumulator({ observable: 'jet1', threshold: 20, binWidth: 5 }, 0);
    curve.add(pts(22, 3), 2, pts(3, 21), 2); // x 22: bin [20, 25), passes
    curve.add(pts(24), 1, pts(19), 1); // bin [20, 25), fails
    curve.add(pts(), 0, pts(30), 1); // x 0: bin [0, 5), passes
    curve.add(pts(40), 1, pts(), 0); // a candidate event without jets fails
    const result = curve.curve();
    expect(result.bins.map((b) => [b.lo, b.hi, b.events, b.passed, b.efficiency])).toEqual([[0, 5, 1, 1, 1], [20, 25, 2, 1, 0.5], [40, 45, 1, 0, 0]]);
  });

  it('reports only bins holding events, with their counts adding up', () => {
    const curve = new TurnOnAccumulator({ observable: 'jet1', threshold: 10, binWidth: 2 }, 0);
    for (const x of [1, 1.5, 9, 1e6]) curve.add(pts(x), 1, pts(x), 1);
    const bins = curve.curve().bins;
    expect(bins.map((b) => b.lo)).toEqual([0, 8, 1e6]);
    expect(bins.reduce((sum, b) => sum + b.events, 0)).toBe(4);
  });

  it('takes the n-th jet for jetN, x 0 and a failure with fewer jets', () => {
    const curve = new TurnOnAccumulator({ observable: 'jetN', jet: 2, threshold: 10, binWidth: 5 }, 0);
    curve.add(pts(50, 12), 2, pts(8, 11, 60), 3); // x 12; candidate's second jet 11 passes
    curve.add(pts(50), 1, pts(60), 1); // x 0; one candidate jet fails
    const result = curve.curve();
    expect(result.jet).toBe(2);
    expect(result.bins.map((b) => [b.lo, b.events, b.passed])).toEqual([[0, 1, 0], [10, 1, 1]]);
  });

  it('sums jet pt above ptMin for HT on both sides', () => {
    const curve = new TurnOnAccumulator({ observable: 'ht', threshold: 100, binWidth: 10 }, 15);
    curve.add(pts(60, 30, 14), 3, pts(70, 25, 14.9), 3); // x 90; candidate HT 95 fails
    curve.add(pts(60, 30, 16), 3, pts(70, 16, 15), 3); // x 106; candidate HT 101 passes
    expect(curve.curve().bins.map((b) => [b.lo, b.passed])).toEqual([[90, 0], [100, 1]]);
  });

  it('counts a reference leading jet below ptMin as no jet', () => {
    const curve = new TurnOnAccumulator({ observable: 'jet1', threshold: 5, binWidth: 5 }, 8);
    curve.add(pts(7), 1, pts(7), 1);
    expect(curve.curve().bins[0].lo).toBe(0);
  });

  it('writes the JSON keys of the contract, jet only for jetN', () => {
    const jet1 = new TurnOnAccumulator({ observable: 'jet1', threshold: 5, binWidth: 5 }, 0);
    jet1.add(pts(7), 1, pts(7), 1);
    expect(Object.keys(jet1.curve())).toEqual(['observable', 'threshold', 'binWidth', 'bins', 'x50', 'x95']);
    expect(Object.keys(jet1.curve().bins[0])).toEqual(['lo', 'hi', 'events', 'passed', 'efficiency', 'low68', 'high68']);
    const jetN = new TurnOnAccumulator({ observable: 'jetN', jet: 3, threshold: 5, binWidth: 5 }, 0);
    expect(Object.keys(jetN.curve())).toEqual(['observable', 'jet', 'threshold', 'binWidth', 'bins', 'x50', 'x95']);
  });
});

describe('a candidate equal to the reference', () => {
  // invented events from the toy generator (fictional Halden ring)
  const reference = new ReferenceClusterer(DEFAULT_GRID, { ...DEFAULT_SETTINGS, threshold: 0.5 });
  const jets = [...generateEvents(DEFAULT_GRID, { events: 300, pileup: 0, seed: 3 })].map((e) => reference.cluster(e.towerIndex, e.towerEt));

  it.each([[37, 5], [52, 5], [40, 10]])('steps from 0 to 1 at T = %d within one bin of %d GeV', (threshold, binWidth) => {
    const curve = new TurnOnAccumulator({ observable: 'jet1', threshold, binWidth }, 0);
    for (const set of jets) curve.add(set.pt, set.count, set.pt, set.count);
    const result = curve.curve();
    for (const bin of result.bins) {
      if (bin.hi <= threshold) expect(bin.efficiency).toBe(0);
      if (bin.lo >= threshold) expect(bin.efficiency).toBe(1);
    }
    expect(result.bins.some((b) => b.efficiency === 0) && result.bins.some((b) => b.efficiency === 1)).toBe(true);
    expect(Math.abs(result.x50! - threshold)).toBeLessThanOrEqual(binWidth);
    expect(Math.abs(result.x95! - threshold)).toBeLessThanOrEqual(binWidth);
  });

  it('shows the rise in the terminal table', () => {
    const curve = new TurnOnAccumulator({ observable: 'jet1', threshold: 52, binWidth: 5 }, 0);
    for (const set of jets) curve.add(set.pt, set.count, set.pt, set.count);
    const text = formatTurnOnCurves([curve.curve()]);
    expect(text).toContain('leading jet >= 52 GeV');
    expect(text).toMatch(/\n {2}50-55 +\d+ +\d+ +0\.\d{4}/);
  });
});
