// The engine against the reference, bit for bit (clustering-spec.md section 7, bit-exact mode):
// same jets in the same order, same constituents, every double identical (Object.is).

import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_GRID, type ClusterSettings, type Grid, type Recombination } from '../host/types.js';
import { firstJetDifference } from './support/jet-equality.js';
import { fullGridEvent, makeRandom, randomEvent, type EventShape, type TowerArrays } from './support/random-events.js';

const EXPONENTS = [-1, 0, 1, 0.5, -0.5];
const RADII = [0.1, 0.4, 0.8, 1.5];
const RECOMBINATIONS: Recombination[] = ['e', 'wta'];
const PT_MINS = [0, 5];

const SHAPES: EventShape[] = [
  { towers: 40, hardJets: 1 },
  { towers: 150, hardJets: 2, dead: 0.1 },
  { towers: 400, hardJets: 3 },
  { towers: 60, ties: true },
  { towers: 200, ties: true, region: 'patch' },
  { towers: 120, region: 'seam', hardJets: 1 },
  { towers: 120, region: 'edges', hardJets: 1 },
  { towers: 30, region: 'seam', ties: true },
  { towers: 1 },
  { towers: 0 },
];

function compare(grid: Grid, settings: ClusterSettings, events: TowerArrays[]): string[] {
  const engine = new WasmClusterer(grid, settings, { debug: true });
  const reference = new ReferenceClusterer(grid, settings);
  const failures: string[] = [];
  events.forEach((event, n) => {
    const difference = firstJetDifference(engine.cluster(event.towerIndex, event.towerEt), reference.cluster(event.towerIndex, event.towerEt));
    if (difference) failures.push(`p ${settings.p} R ${settings.radius} ${settings.recombination} ptMin ${settings.ptMin} event ${n}: ${difference}`);
  });
  return failures;
}

function settingsOf(p: number, radius: number, recombination: Recombination, ptMin: number): ClusterSettings {
  return { p, radius, recombination, ptMin, threshold: 0 };
}

describe('the engine matches the reference bit for bit', () => {
  for (const p of EXPONENTS) {
    it(`on varied events for p = ${p}, every radius, both recombinations, ptMin 0 and 5`, () => {
      const failures: string[] = [];
      let seed = 1000 * (p + 2);
      for (const radius of RADII) {
        for (const recombination of RECOMBINATIONS) {
          for (const ptMin of PT_MINS) {
            const random = makeRandom(seed++);
            const events: TowerArrays[] = [];
            for (let round = 0; round < 4; round++) {
              for (const shape of SHAPES) events.push(randomEvent(DEFAULT_GRID, shape, random));
            }
            failures.push(...compare(DEFAULT_GRID, settingsOf(p, radius, recombination, ptMin), events));
          }
        }
      }
      expect(failures.slice(0, 5)).toEqual([]);
    }, 60_000);
  }

  it('on fully occupied grids for every exponent and radius', () => {
    const failures: string[] = [];
    let seed = 7;
    for (const p of EXPONENTS) {
      for (const radius of RADII) {
        const random = makeRandom(seed++);
        const recombination = seed % 2 === 0 ? 'e' : 'wta';
        failures.push(...compare(DEFAULT_GRID, settingsOf(p, radius, recombination, 0), [fullGridEvent(DEFAULT_GRID, random, seed % 3 === 0)]));
      }
    }
    expect(failures).toEqual([]);
  }, 120_000);

  it('on small and odd grids, where a search window wraps all the way round in phi', () => {
    const grids: Grid[] = [
      { etaMin: -1, etaMax: 1, etaBins: 6, phiBins: 7 },
      { etaMin: -0.3, etaMax: 0.9, etaBins: 3, phiBins: 4 },
      { etaMin: -4, etaMax: 4, etaBins: 80, phiBins: 9 },
      { etaMin: 0, etaMax: 0.2, etaBins: 1, phiBins: 1 },
    ];
    const failures: string[] = [];
    let seed = 99;
    for (const grid of grids) {
      for (const p of EXPONENTS) {
        for (const radius of RADII) {
          const random = makeRandom(seed++);
          const events = [10, 25, 200].map((towers) => randomEvent(grid, { towers, hardJets: 1, ties: towers === 25 }, random));
          events.push(fullGridEvent(grid, random));
          failures.push(...compare(grid, settingsOf(p, radius, seed % 2 === 0 ? 'e' : 'wta', seed % 3 === 0 ? 3 : 0), events));
        }
      }
    }
    expect(failures.slice(0, 5)).toEqual([]);
  }, 60_000);

  it('on a fine phi grid, where a new jet\'s window spans more than one 64-bit word of a row', () => {
    // 256 columns: at R = 1.5 a window is about 123 columns wide, too wide for the one-load
    // rectangle, so the row-by-row scan over several words of occupancy bits takes over
    const grid: Grid = { etaMin: -2, etaMax: 2, etaBins: 12, phiBins: 256 };
    const failures: string[] = [];
    let seed = 3100;
    for (const p of [-1, 0, 1]) {
      for (const radius of [0.8, 1.5]) {
        const random = makeRandom(seed++);
        const events = [
          randomEvent(grid, { towers: 300, hardJets: 2 }, random),
          randomEvent(grid, { towers: 200, region: 'seam', hardJets: 1 }, random),
          randomEvent(grid, { towers: 150, ties: true }, random),
        ];
        failures.push(...compare(grid, settingsOf(p, radius, 'e', 0), events));
      }
    }
    expect(failures).toEqual([]);
  }, 60_000);

  it('with a threshold that drops towers, and with towers in any input order', () => {
    const failures: string[] = [];
    const random = makeRandom(4242);
    for (const p of EXPONENTS) {
      const settings: ClusterSettings = { p, radius: 0.4, recombination: 'e', ptMin: 0, threshold: 1.5 };
      const events: TowerArrays[] = [];
      for (let k = 0; k < 20; k++) events.push(randomEvent(DEFAULT_GRID, { towers: 300, hardJets: 2, dead: 0.2 }, random));
      failures.push(...compare(DEFAULT_GRID, settings, events));
    }
    expect(failures).toEqual([]);
  });

  it('on a grid reaching |eta| = 40, where merged jets get infinite or undefined rapidities', () => {
    const grid: Grid = { etaMin: -40, etaMax: 40, etaBins: 80, phiBins: 16 };
    const failures: string[] = [];
    let nonFinite = 0;
    let seed = 500;
    for (const p of [-1, 0, 1]) {
      for (const radius of [0.4, 1.5]) {
        const random = makeRandom(seed++);
        const events = Array.from({ length: 10 }, (_, k) => randomEvent(grid, { towers: 300, hardJets: 1, region: k % 2 ? 'edges' : 'anywhere' }, random));
        const settings = settingsOf(p, radius, 'e', 0);
        const reference = new ReferenceClusterer(grid, settings);
        for (const event of events) {
          if (reference.cluster(event.towerIndex, event.towerEt).rapidity.some((y) => !Number.isFinite(y))) nonFinite++;
        }
        failures.push(...compare(grid, settings, events));
      }
    }
    expect(nonFinite).toBeGreaterThan(0);
    expect(failures).toEqual([]);
  }, 60_000);
});
