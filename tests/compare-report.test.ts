// The validation report's arithmetic: distributions, bins, worst events and counts.

import { describe, expect, it } from 'vitest';
import { makeRandom } from '../host/random.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';
import { DeviationHistogram } from '../host/validate/deviation-histogram.js';
import { PT_BIN_EDGES_GEV } from '../host/validate/validation-report.js';
import { ValidationAccumulator } from '../host/validate/validation-accumulator.js';
import { formatValidationReport } from '../host/validate/validation-text.js';

function exactQuantile(sorted: number[], q: number): number {
  return sorted[Math.floor(q * (sorted.length - 1))];
}

/** one event's jets: pz from pt and y of a massless jet */
function jets(pt: number[], y: number[], phi: number[]) {
  return {
    count: pt.length, pt: Float64Array.from(pt), rapidity: Float64Array.from(y), phi: Float64Array.from(phi),
    pz: Float64Array.from(pt.map((p, k) => p * Math.sinh(y[k]))),
  };
}

describe('DeviationHistogram', () => {
  const random = makeRandom(9);
  // deviations spread over many decades and both signs, as pt responses are
  const values = Array.from({ length: 5000 }, () => (random() < 0.5 ? -1 : 1) * 10 ** (-9 + 8 * random()));
  const histogram = new DeviationHistogram();
  for (const v of values) histogram.add(v);
  const sorted = [...values].sort((a, b) => a - b);

  it('gives mean and RMS exactly', () => {
    const mean = values.reduce((s, v) => s + v, 0) / values.length;
    const rms = Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / values.length);
    expect(histogram.mean()).toBeCloseTo(mean, 12);
    expect(histogram.rms()! / rms).toBeCloseTo(1, 9);
  });

  it.each([0.01, 0.16, 0.5, 0.84, 0.99])('gives the %s quantile within the bin width (5 %)', (q) => {
    const exact = exactQuantile(sorted, q);
    const estimate = histogram.quantile(q)!;
    expect(Math.sign(estimate)).toBe(Math.sign(exact));
    expect(Math.abs(estimate / exact - 1)).toBeLessThan(0.05);
  });

  it('keeps exact zeros apart from tiny values', () => {
    const zeros = new DeviationHistogram();
    for (let k = 0; k < 10; k++) zeros.add(0);
    zeros.add(1e-12);
    expect(zeros.quantile(0.5)).toBe(0);
    expect(zeros.quantile(1)).toBe(1e-12);
  });

  it('counts NaN apart and leaves the statistics of the rest alone', () => {
    const h = new DeviationHistogram();
    h.add(NaN);
    h.add(0.5);
    expect(h.nanCount).toBe(1);
    expect(h.count).toBe(1);
    expect(h.mean()).toBe(0.5);
  });

  it('is empty-safe: no values give null statistics', () => {
    const h = new DeviationHistogram();
    expect(h.summary()).toMatchObject({ count: 0, mean: null, rms: null, min: null, max: null });
  });
});

describe('ValidationAccumulator', () => {
  const tolerance = { ...DEFAULT_TOLERANCE, ptMin: 20 };

  function accumulate() {
    const matcher = new ToleranceMatcher(tolerance);
    const accumulator = new ValidationAccumulator(tolerance, 2);
    const reference = jets([100, 50, 25, 10], [0.1, 1.2, -2.2, 0.4], [1, 2, 3, 4]);
    // event 0 agrees; event 1 has jet 1 off by 2 %; event 2 loses jet 2; event 3 is missing
    const candidates = [
      jets([100, 50, 25, 10], [0.1, 1.2, -2.2, 0.4], [1, 2, 3, 4]),
      jets([100, 51, 25], [0.1, 1.2, -2.2], [1, 2, 3]),
      jets([100, 50], [0.1, 1.2], [1, 2]),
    ];
    candidates.forEach((candidate, event) => {
      matcher.match(reference, candidate);
      accumulator.addCompared(event, matcher, reference, candidate, null);
    });
    accumulator.addMissing(3, 'no record');
    accumulator.addInvalidInEvents();
    return accumulator.report();
  }

  it('counts agreeing, disagreeing, missing and invalid events so that they add up', () => {
    const { events } = accumulate();
    expect(events).toMatchObject({ read: 5, invalidInEvents: 1, valid: 4, compared: 3, agreeing: 1, disagreeing: 3, missingFromCandidate: 1 });
    expect(events.agreeingFraction).toBe(0.25);
  });

  it('counts only jets above ptMin for efficiency', () => {
    const { jets: j } = accumulate();
    expect(j.referenceAbove).toBe(9);
    expect(j.matched).toBe(8);
    expect(j.efficiency).toBe(8 / 9);
    expect(j.agreeing).toBe(7);
  });

  it('puts each reference jet into its pt and |η| bin', () => {
    const report = accumulate();
    const ptBin = (pt: number) => report.byReferencePt[PT_BIN_EDGES_GEV.filter((edge) => pt >= edge).length - 1];
    expect(ptBin(100).referenceJets).toBe(3);
    expect(ptBin(25).referenceJets).toBe(3);
    expect(ptBin(25).matched).toBe(2);
    // |η| 2.2 of the 25 GeV jet: the bin [2.0, 2.5)
    expect(report.byAbsEta[4].referenceJets).toBe(3);
  });

  it('keeps the worst events, a lost jet before a pt difference', () => {
    const { worstEvents } = accumulate();
    expect(worstEvents.map((w) => w.event)).toEqual([2, 1]);
    expect(worstEvents[0].jets[0]).toMatchObject({ referenceJet: 2, status: 'unmatched' });
    expect(worstEvents[1].jets[0].ptRatio).toBeCloseTo(1.02, 12);
  });

  it('reports the response as pt_candidate / pt_reference', () => {
    const { response } = accumulate();
    expect(response.max).toBeCloseTo(1.02, 12);
    expect(response.min).toBe(1);
  });

  it('prints the counts in its terminal text', () => {
    const text = formatValidationReport(accumulate());
    expect(text).toContain('4 valid, 1 agree (25.00 %), 3 disagree (1 missing from the candidate');
    expect(text).toContain('missing events: 1, e.g. event 3: no record');
  });
});
