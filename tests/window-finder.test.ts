// The window finder of clustering-spec.md section 11 on hand-made events whose answer follows
// from the spec's sentences, then against a brute-force reading of the same sentences on
// generated events (invented data from the toy generator).

import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import { generateEvents } from '../host/generator/generate.js';
import { WindowFinder, parseWindowEmulation, windowFinderName } from '../host/clustering/window-finder.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS, type ClusterSettings, type Grid, type JetSet } from '../host/types.js';
import { windowBruteForce } from './support/window-brute-force.js';

const PHI_BINS = DEFAULT_GRID.phiBins; // 64
const ETA_BINS = DEFAULT_GRID.etaBins; // 50
const tower = (ieta: number, iphi: number): number => ieta * PHI_BINS + iphi;

function find(towers: [number, number][], options: { grid?: Grid; settings?: Partial<ClusterSettings>; window?: number; seedEt?: number } = {}): JetSet {
  const finder = new WindowFinder(options.grid ?? DEFAULT_GRID, { ...DEFAULT_SETTINGS, ...options.settings },
    { windowTowers: options.window ?? 9, seedEt: options.seedEt ?? 5 });
  return finder.cluster(Int32Array.from(towers.map((t) => t[0])), Float64Array.from(towers.map((t) => t[1])));
}

function towersOf(jets: JetSet, n: number): number[] {
  return Array.from(jets.towers.subarray(jets.towerStart[n], jets.towerStart[n] + jets.towerCount[n]));
}

describe('window finder on hand-made events', () => {
  it('makes one jet of one tower, with its et, at its centre, massless', () => {
    const jets = find([[tower(25, 10), 20]]);
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(20);
    // tower centres as spec section 1 writes them
    const eta = -2.5 + (25 + 0.5) * (5 / 50);
    const phi = (10 + 0.5) * ((2 * Math.PI) / 64);
    expect(jets.rapidity[0]).toBe(eta);
    expect(jets.phi[0]).toBe(phi);
    expect([jets.px[0], jets.py[0], jets.pz[0], jets.energy[0]]).toEqual(
      [20 * Math.cos(phi), 20 * Math.sin(phi), 20 * Math.sinh(eta), 20 * Math.cosh(eta)]);
    expect(jets.mass[0]).toBe(0);
    expect(towersOf(jets, 0)).toEqual([tower(25, 10)]);
  });

  it('gives two equal towers in one window one jet, seeded at the smaller flat index', () => {
    const jets = find([[tower(20, 12), 10], [tower(18, 14), 10]]);
    expect(jets.count).toBe(1);
    expect(jets.phi[0]).toBe((14 + 0.5) * ((2 * Math.PI) / 64)); // tower(18, 14) has the smaller index
    expect(jets.pt[0]).toBe(20);
  });

  it('lets a larger neighbour take the seed', () => {
    const jets = find([[tower(20, 12), 10], [tower(20, 13), 12]]);
    expect(jets.count).toBe(1);
    expect(jets.phi[0]).toBe((13 + 0.5) * ((2 * Math.PI) / 64));
    expect(jets.pt[0]).toBe(22);
  });

  it('wraps the window of a seed at the phi seam', () => {
    // columns 60..63 and 0..4 are within 4 of column 0; 59 and 5 are not
    const jets = find([[tower(30, 0), 30], [tower(30, 63), 2], [tower(31, 60), 1], [tower(29, 59), 1], [tower(30, 4), 1], [tower(30, 5), 1]]);
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(30 + 2 + 1 + 1);
    expect(towersOf(jets, 0)).toEqual([tower(30, 0), tower(30, 4), tower(30, 63), tower(31, 60)]);
  });

  it('cuts the window of a seed at the eta edge instead of wrapping it', () => {
    const jets = find([[tower(0, 20), 30], [tower(4, 20), 1], [tower(5, 20), 1], [tower(ETA_BINS - 1, 20), 1]]);
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(31);
    expect(towersOf(jets, 0)).toEqual([tower(0, 20), tower(4, 20)]);
  });

  it('counts a tower in every window that holds it', () => {
    // seeds 5 columns apart (each outside the other's window); tower(10, 12) is 2 and 3 columns from them
    const jets = find([[tower(10, 10), 20], [tower(10, 15), 15], [tower(10, 12), 3]]);
    expect(jets.count).toBe(2);
    expect(Array.from(jets.pt)).toEqual([23, 18]);
    expect(towersOf(jets, 0)).toEqual([tower(10, 10), tower(10, 12)]);
    expect(towersOf(jets, 1)).toEqual([tower(10, 12), tower(10, 15)]);
  });

  it('makes no jet when no tower reaches seedEt', () => {
    expect(find([[tower(10, 10), 4.9], [tower(30, 40), 4.99]]).count).toBe(0);
  });

  it('seeds at exactly seedEt', () => {
    expect(find([[tower(10, 10), 5]]).count).toBe(1);
  });

  it('counts each column once when W is wider than the phi bins', () => {
    const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 5, phiBins: 4 };
    const jets = find([[2 * 4 + 0, 10], [2 * 4 + 1, 1], [2 * 4 + 2, 1], [2 * 4 + 3, 1], [0 * 4 + 2, 0.5]], { grid });
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(13.5);
    expect(jets.towerCount[0]).toBe(5);
    expect(towersOf(jets, 0)).toEqual([2, 8, 9, 10, 11]);
  });

  it('leaves out towers at or below the threshold, in seeds and sums', () => {
    const jets = find([[tower(10, 10), 20], [tower(10, 11), 0.5], [tower(30, 30), 6]], { settings: { threshold: 6 } });
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(20);
  });

  it('keeps jets with pt >= ptMin in decreasing pt, equal pt to the smaller seed index', () => {
    const jets = find([[tower(40, 50), 12], [tower(10, 10), 12], [tower(25, 30), 30], [tower(25, 31), 1], [tower(5, 50), 8]],
      { settings: { ptMin: 10 } });
    expect(Array.from(jets.pt)).toEqual([31, 12, 12]);
    expect(Array.from(jets.towerStart.subarray(0, 3)).map((start) => jets.towers[start])).toEqual([tower(25, 30), tower(10, 10), tower(40, 50)]);
  });

  it('forgets one event before the next', () => {
    const finder = new WindowFinder(DEFAULT_GRID, DEFAULT_SETTINGS, { windowTowers: 9, seedEt: 5 });
    finder.cluster(Int32Array.of(tower(10, 10)), Float64Array.of(50));
    const jets = finder.cluster(Int32Array.of(tower(10, 11)), Float64Array.of(7));
    expect(jets.count).toBe(1);
    expect(jets.pt[0]).toBe(7);
  });
});

describe('window finder against a brute-force reading of section 11', () => {
  const events = [...generateEvents(DEFAULT_GRID, { events: 20, pileup: 60, seed: 5 })];

  it.each([[9, 5, 0.2, 0], [5, 3, 0, 10], [1, 1, 0.5, 0], [69, 5, 0, 0]])('agrees for W %i, seedEt %d, threshold %d, ptMin %d', (window, seedEt, threshold, ptMin) => {
    const finder = new WindowFinder(DEFAULT_GRID, { ...DEFAULT_SETTINGS, threshold, ptMin }, { windowTowers: window, seedEt });
    let jetsSeen = 0;
    for (const event of events) {
      const jets = finder.cluster(event.towerIndex, event.towerEt);
      const expected = windowBruteForce(PHI_BINS, event.towerIndex, event.towerEt, window, seedEt, threshold, ptMin);
      expect(jets.count).toBe(expected.length);
      for (let n = 0; n < jets.count; n++) {
        expect(jets.pt[n]).toBe(expected[n].pt);
        expect(towersOf(jets, n)).toEqual(expected[n].towers);
      }
      jetsSeen += jets.count;
    }
    expect(jetsSeen).toBeGreaterThan(0);
  });
});

describe('parseWindowEmulation', () => {
  it('takes the defaults 9 and 5 for the parts left out', () => {
    expect(parseWindowEmulation('window')).toEqual({ windowTowers: 9, seedEt: 5 });
    expect(parseWindowEmulation('window:5')).toEqual({ windowTowers: 5, seedEt: 5 });
    expect(parseWindowEmulation('window:7:2.5')).toEqual({ windowTowers: 7, seedEt: 2.5 });
  });

  it('leaves other emulations alone', () => {
    expect(parseWindowEmulation('f32')).toBeNull();
    expect(parseWindowEmulation('fixed:0.25')).toBeNull();
  });

  it.each(['window:8', 'window:0', 'window:-3', 'window:9:-1', 'window:9:x', 'window::5', 'window:9:5:1', 'window:2.5'])('rejects %j as bad usage', (text) => {
    expect(() => parseWindowEmulation(text)).toThrow(UsageError);
  });

  it('names the clusterer after its settings', () => {
    expect(windowFinderName({ windowTowers: 9, seedEt: 5 })).toBe('window-9-5');
  });
});
