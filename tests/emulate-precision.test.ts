// Precision emulation: single-precision arithmetic and fixed-LSB tower energies. Events come
// from the toy generator (invented data).

import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { makeEmulatedClusterer } from '../host/clustering/emulate.js';
import { parseEmulation } from '../host/clustering/emulation-mode.js';
import { generateEvents } from '../host/generator/generate.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_TOLERANCE, ToleranceMatcher } from '../host/validate/tolerance-compare.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type ClusterSettings, type JetSet } from '../host/types.js';
import { clusterBruteForce, SINGLE_PRECISION } from './support/brute-force.js';
import { firstJetDifference } from './support/jet-equality.js';
import { seededRandom, smallEvent } from './support/small-events.js';

const settings: ClusterSettings = { ...DEFAULT_SETTINGS, threshold: 0.2 };
const events = [...generateEvents(DEFAULT_GRID, { events: 30, pileup: 40, seed: 11 })];
const reference = new ReferenceClusterer(DEFAULT_GRID, settings);
const referenceJets = events.map((e) => reference.cluster(e.towerIndex, e.towerEt));

describe('parseEmulation', () => {
  it('reads f32', () => {
    expect(parseEmulation('f32')).toBe('f32');
  });

  it('reads fixed:LSB with the LSB in GeV', () => {
    expect(parseEmulation('fixed:0.25')).toEqual({ lsbGeV: 0.25 });
  });

  it.each(['', 'f64', 'fixed', 'fixed:', 'fixed:0', 'fixed:-1', 'fixed:abc', 'fixed:inf'])('rejects %j as bad usage', (text) => {
    expect(() => parseEmulation(text)).toThrow(UsageError);
  });
});

describe('single-precision emulation', () => {
  const clusterer = makeEmulatedClusterer(DEFAULT_GRID, settings, 'f32');
  const jets = events.map((e) => clusterer.cluster(e.towerIndex, e.towerEt));

  it('is named emulate-f32', () => {
    expect(clusterer.name).toBe('emulate-f32');
  });

  it('reports only single-precision numbers', () => {
    for (const set of jets) {
      for (const field of ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const) {
        for (let k = 0; k < set.count; k++) expect(Math.fround(set[field][k])).toBe(set[field][k]);
      }
    }
  });

  it('differs from the double-precision reference in the last bits', () => {
    const differing = jets.filter((set, n) => firstJetDifference(set, referenceJets[n]) !== null).length;
    expect(differing).toBeGreaterThan(0);
  });

  it('gives every tower above threshold to exactly one jet', () => {
    events.forEach((event, n) => {
      const above = [...event.towerIndex].filter((_, k) => event.towerEt[k] > settings.threshold).sort((a, b) => a - b);
      const set = jets[n];
      expect([...set.towers].sort((a, b) => a - b)).toEqual(above);
    });
  });

  it('agrees with the reference within the default tolerances on every jet above 20 GeV', () => {
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 20 });
    jets.forEach((set, n) => expect(matcher.match(referenceJets[n], set)).toBe(true));
  });

  it.each([
    ['anti-kt E-scheme', { p: -1, recombination: 'e' }],
    ['kt E-scheme', { p: 1, recombination: 'e' }],
    ['Cambridge/Aachen winner-take-all', { p: 0, recombination: 'wta' }],
    ['p = 0.5 E-scheme', { p: 0.5, recombination: 'e' }],
  ] as const)('follows a single-precision brute force bit for bit (%s)', (_name, algorithm) => {
    const small: ClusterSettings = { ...DEFAULT_SETTINGS, ...algorithm, radius: 0.6 };
    const emulated = makeEmulatedClusterer(DEFAULT_GRID, small, 'f32');
    const random = seededRandom(3);
    for (let n = 0; n < 150; n++) {
      const shape = { towers: 2 + (n % 14), ties: n % 3 === 0, seam: n % 5 === 1, window: 8 };
      const event = smallEvent(DEFAULT_GRID, shape, random);
      const expected = clusterBruteForce(DEFAULT_GRID, event.towerIndex, event.towerEt, small, { round: SINGLE_PRECISION });
      expect(firstJetDifference(emulated.cluster(event.towerIndex, event.towerEt), expected)).toBeNull();
    }
  });

  it('keeps the output order: decreasing pt', () => {
    for (const set of jets) for (let k = 1; k < set.count; k++) expect(set.pt[k]).toBeLessThanOrEqual(set.pt[k - 1]);
  });
});

describe('fixed-LSB emulation', () => {
  const lsbGeV = 0.25;
  const clusterer = makeEmulatedClusterer(DEFAULT_GRID, settings, { lsbGeV });

  it('is named after its LSB', () => {
    expect(clusterer.name).toBe('emulate-fixed-0.25');
  });

  it('equals the reference run on energies rounded to the LSB by hand, bit for bit', () => {
    events.forEach((event) => {
      const index: number[] = [];
      const et: number[] = [];
      event.towerEt.forEach((value, k) => {
        const counts = Math.round(value / lsbGeV);
        if (counts > 0) { index.push(event.towerIndex[k]); et.push(counts * lsbGeV); }
      });
      const expected = reference.cluster(Int32Array.from(index), Float64Array.from(et));
      expect(firstJetDifference(clusterer.cluster(event.towerIndex, event.towerEt), expected)).toBeNull();
    });
  });

  it('equals the plain reference on energies that are already multiples of the LSB', () => {
    const towerIndex = Int32Array.of(5, 6, 70, 200, 1000);
    const towerEt = Float64Array.of(10.25, 3.5, 7.75, 40, 0.5);
    expect(firstJetDifference(clusterer.cluster(towerIndex, towerEt), reference.cluster(towerIndex, towerEt))).toBeNull();
  });

  it('drops towers that round to zero counts', () => {
    const set: JetSet = clusterer.cluster(Int32Array.of(5, 900), Float64Array.of(12, 0.12));
    expect([...set.towers]).toEqual([5]);
  });

  it('applies the threshold to the quantised energy: 0.6 GeV rounds onto a 0.5 GeV threshold and drops, 0.63 GeV rounds up and stays', () => {
    const withThreshold = makeEmulatedClusterer(DEFAULT_GRID, { ...settings, threshold: 0.5 }, { lsbGeV });
    const set = withThreshold.cluster(Int32Array.of(5, 900, 1700), Float64Array.of(12, 0.6, 0.63));
    expect([...set.towers].sort((a, b) => a - b)).toEqual([5, 1700]);
  });

  it('moves jet pt away from the reference on generated events', () => {
    const matcher = new ToleranceMatcher({ ...DEFAULT_TOLERANCE, ptMin: 20 });
    const disagreeing = events.filter((e, n) => !matcher.match(referenceJets[n], clusterer.cluster(e.towerIndex, e.towerEt))).length;
    expect(disagreeing).toBeGreaterThan(0);
  });
});
