// The engine's pileup chain against the reference's, bit for bit on every reported value
// (clustering-spec.md part two: sections 8-10 fix every order of operations). The reference
// takes O(N^2) per event and areas fill the whole grid, so the 300 events of each option set
// live on a 12 x 16 grid (192 cells); a few default-grid events follow at the end.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { clusterWithPileup } from '../host/clustering/pileup/chain.js';
import { EnginePileupClusterer } from '../host/clustering/pileup/engine-chain.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, type ClusterSettings, type Grid, type JetSet, type PileupSettings } from '../host/types.js';
import { firstJetDifference } from './support/jet-equality.js';
import { seededRandom, smallEvent } from './support/small-events.js';
import { pileupEvents } from './support/random-events.js';

const grid: Grid = { etaMin: -1.2, etaMax: 1.2, etaBins: 12, phiBins: 16 };
const tables = makeGridTables(grid);
const EVENTS = 300;

/** null when identical, else the first difference in one line */
function firstPileupDifference(engine: JetSet, reference: JetSet): string | null {
  const jets = firstJetDifference(engine, reference);
  if (jets) return jets;
  const a = engine.pileup!;
  const b = reference.pileup!;
  for (const field of ['rho', 'etCut', 'killed', 'subtractedAway'] as const) {
    if (!Object.is(a[field], b[field])) return `${field} ${a[field]} vs ${b[field]}`;
  }
  for (const field of ['ghosts', 'area', 'ptRaw'] as const) {
    for (let n = 0; n < reference.count; n++) {
      if (!Object.is(a[field][n], b[field][n])) return `jet ${n} ${field} ${a[field][n]} vs ${b[field][n]}`;
    }
  }
  return null;
}

/** event k of a set: no tower, one tower, the full grid, ties in et, the phi seam, or random */
function eventOf(k: number, random: () => number): { towerIndex: Int32Array; towerEt: Float64Array } {
  const cells = grid.etaBins * grid.phiBins;
  switch (k % 8) {
    case 0: return { towerIndex: new Int32Array(0), towerEt: new Float64Array(0) };
    case 1: return smallEvent(grid, { towers: 1 }, random);
    case 2: {
      const towerIndex = Int32Array.from({ length: cells }, (_, t) => cells - 1 - t); // any order
      return { towerIndex, towerEt: Float64Array.from(towerIndex, () => 0.2 + 3 * random() ** 2) };
    }
    case 3: return smallEvent(grid, { towers: 20 + Math.floor(random() * 100), ties: true }, random);
    case 4: return smallEvent(grid, { towers: 5 + Math.floor(random() * 30), seam: true }, random);
    case 5: return smallEvent(grid, { towers: 5 + Math.floor(random() * 20), edges: true }, random);
    default: return smallEvent(grid, { towers: 2 + Math.floor(random() * 150) }, random);
  }
}

const base: ClusterSettings = { p: -1, radius: 0.5, ptMin: 0, threshold: 0, recombination: 'e' };
const off = DEFAULT_PILEUP_SETTINGS;
const optionSets: [string, Partial<ClusterSettings>, PileupSettings][] = [
  ['areas, anti-kt', {}, { ...off, areas: true }],
  ['areas, Cambridge/Aachen', { p: 0 }, { ...off, areas: true }],
  ['areas, kt, ghost et 1e-120', { p: 1 }, { ...off, areas: true, ghostEt: 1e-120 }],
  ['rho from patches 3:4', { threshold: 1 }, { ...off, rho: { kind: 'patches', patch: { etaRows: 3, phiColumns: 4 } } }],
  ['rho from kt jets 0.4', {}, { ...off, rho: { kind: 'kt', radius: 0.4 } }],
  ['areas and subtraction, rho from patches 5:5', { ptMin: 1 }, { ...off, areas: true, subtract: true }],
  ['areas and subtraction, rho from kt jets, C/A', { p: 0 }, { ...off, areas: true, subtract: true, rho: { kind: 'kt', radius: 0.6 } }],
  ['SoftKiller 3:3', {}, { ...off, softKiller: { etaRows: 3, phiColumns: 3 } }],
  ['SoftKiller, areas, subtraction, kt, ptMin', { p: 1, ptMin: 2 }, { ...off, areas: true, subtract: true, softKiller: { etaRows: 4, phiColumns: 5 } }],
  ['everything, winner-take-all anti-kt', { recombination: 'wta', threshold: 0.5 }, { ...off, areas: true, subtract: true, rho: { kind: 'kt', radius: 0.5 }, softKiller: { etaRows: 2, phiColumns: 4 } }],
];

describe('the engine pileup chain and the reference chain', () => {
  optionSets.forEach(([name, overrides, pileup], set) => {
    it(`agree to the bit on ${EVENTS} events: ${name}`, () => {
      const settings = { ...base, ...overrides };
      const engine = new EnginePileupClusterer(grid, settings, pileup, 'test', { debug: true });
      const random = seededRandom(100 + set);
      let jets = 0;
      for (let k = 0; k < EVENTS; k++) {
        const event = eventOf(k, random);
        const expected = clusterWithPileup(tables, event.towerIndex, event.towerEt, settings, pileup);
        const actual = engine.cluster(event.towerIndex, event.towerEt);
        const difference = firstPileupDifference(actual, expected);
        if (difference) expect.fail(`event ${k}: ${difference}`);
        jets += expected.count;
      }
      expect(jets).toBeGreaterThan(EVENTS);
    }, 120_000);
  });

  it('agree to the bit on default-grid pileup-like events with every step on', () => {
    const settings: ClusterSettings = { ...base, radius: 0.4 };
    const pileup: PileupSettings = { ...off, areas: true, subtract: true, softKiller: { etaRows: 5, phiColumns: 5 } };
    const engine = new EnginePileupClusterer(DEFAULT_GRID, settings, pileup, 'test');
    const defaultTables = makeGridTables(DEFAULT_GRID);
    for (const event of pileupEvents(DEFAULT_GRID, 850, 2, seededRandom(77))) {
      const expected = clusterWithPileup(defaultTables, event.towerIndex, event.towerEt, settings, pileup);
      expect(expected.pileup!.killed).toBeGreaterThan(0);
      expect(firstPileupDifference(engine.cluster(event.towerIndex, event.towerEt), expected)).toBeNull();
    }
  }, 60_000);
});
