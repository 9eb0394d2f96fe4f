import { describe, expect, it } from 'vitest';
import { MultiplicityBins } from '../host/measure/multiplicity-fit.js';
import { fitScaling, scalingSamples, SCALING_MIN_BIN_EVENTS, type Scaling } from '../host/measure/scaling-fit.js';
import { makeRandom } from '../host/random.js';

/**
 * Synthetic per-event service times c·N^exponent with a log-normal-like spread (the sum of three
 * uniforms), N drawn uniformly from [nLow, nHigh]: what a worker would report, without a worker.
 */
function fitOf(events: number, nLow: number, nHigh: number, exponent: number, seed: number): Scaling {
  const random = makeRandom(seed);
  const bins = new MultiplicityBins();
  let nMin = Infinity;
  let nMax = 0;
  for (let k = 0; k < events; k++) {
    const towers = nLow + Math.floor(random() * (nHigh - nLow + 1));
    const spread = Math.exp(0.3 * (random() + random() + random() - 1.5));
    bins.record(towers, 20 * towers ** exponent * spread);
    nMin = Math.min(nMin, towers);
    nMax = Math.max(nMax, towers);
  }
  return fitScaling(scalingSamples(bins), nMin, nMax);
}

describe('scaling fit', () => {
  it('finds alpha = 1.5 within its reported uncertainty for times c·N^1.5', () => {
    const fit = fitOf(4000, 50, 1000, 1.5, 7);
    expect(fit.alpha).not.toBeNull();
    if (fit.alpha === null) return;
    // a bootstrap error of a fitted slope: non-zero, and the truth within three of it
    expect(fit.alphaError).toBeGreaterThan(0);
    expect(Math.abs(fit.alpha - 1.5)).toBeLessThan(3 * fit.alphaError);
    expect(fit.nMin).toBe(50);
    expect(fit.nMax).toBeLessThanOrEqual(1000);
  });

  it('gives the same alpha and error for the same events (seeded bootstrap)', () => {
    expect(fitOf(1000, 50, 1000, 1.5, 3)).toEqual(fitOf(1000, 50, 1000, 1.5, 3));
  });

  it('gives no alpha when N spans less than a factor 1.5, and says why', () => {
    const fit = fitOf(4000, 700, 900, 1.5, 7);
    expect(fit.alpha).toBeNull();
    if (fit.alpha !== null) return;
    expect(fit.reason).toContain('N spans only 700..900 towers');
    expect(fit.reason).toContain('--pileup 50:250');
  });

  it('gives no alpha when fewer than 3 bins hold enough events, and says why', () => {
    // 40 events over 50..1000 spread over ~17 bins: none reaches the minimum
    const fit = fitOf(40, 50, 1000, 1.5, 7);
    expect(fit.alpha).toBeNull();
    if (fit.alpha !== null) return;
    expect(fit.reason).toContain(`hold ${SCALING_MIN_BIN_EVENTS}+ events, a fit needs 3`);
  });

  it('lists every bin with its N edges and event count', () => {
    const fit = fitOf(500, 100, 400, 1.5, 1);
    expect(fit.bins.reduce((sum, bin) => sum + bin.events, 0)).toBe(500);
    for (const bin of fit.bins) expect(bin.nLow).toBeLessThanOrEqual(bin.nHigh);
  });
});
