// The engine's grooming against the reference's, bit for bit on every groomed value
// (clustering-spec.md section 12 fixes every order of operations), on 300 random large-R events
// per groomer and setting: objects on the phi seam, equal-pt prongs, one-tower jets, and
// f_cut = 0 (trimming keeps every subjet). Both groomers get the same reported jets, from the
// reference; a last check runs the engine's clustering and grooming end to end.

import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { GroomingClusterer } from '../host/clustering/grooming/groomer.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import type { ClusterSettings, Grid, GroomingSettings } from '../host/types.js';
import { firstGroomedDifference } from './support/groomed-equality.js';
import { firstJetDifference } from './support/jet-equality.js';
import { largeRadiusEvent, type LargeRadiusShape } from './support/large-radius-events.js';
import { seededRandom, smallEvent } from './support/small-events.js';
import { allocateJetSet } from '../host/clustering/jet-set.js';

const grid: Grid = { etaMin: -2, etaMax: 2, etaBins: 40, phiBins: 48 };
const EVENTS = 300;

/** event k: plain, on the seam, equal-pt prongs, with a lonely tower and no noise, or busy */
function shapeOf(k: number): LargeRadiusShape {
  switch (k % 5) {
    case 0: return { objects: 2 };
    case 1: return { objects: 2, seam: true };
    case 2: return { objects: 2, equalPt: true };
    case 3: return { objects: 1, lonelyTower: true, noise: 0 };
    default: return { objects: 3, noise: 0.15 };
  }
}

const settingSets: [string, Partial<ClusterSettings>, GroomingSettings][] = [
  ['trimming 0.2:0.05 (common settings)', {}, { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null }],
  ['trimming 0.3:0 (every subjet kept)', { radius: 0.8 }, { trim: { subjetRadius: 0.3, ptFraction: 0 }, softDrop: null }],
  ['trimming 0.1:0.2 (most subjets dropped)', { radius: 1.2 }, { trim: { subjetRadius: 0.1, ptFraction: 0.2 }, softDrop: null }],
  ['soft drop 0.1:0 (beta = 0)', {}, { trim: null, softDrop: { zCut: 0.1, beta: 0 } }],
  ['soft drop 0.1:1 (beta = 1)', { radius: 0.8 }, { trim: null, softDrop: { zCut: 0.1, beta: 1 } }],
  ['soft drop 0.3:2, kt jets', { p: 1, radius: 1.2 }, { trim: null, softDrop: { zCut: 0.3, beta: 2 } }],
];

describe('engine grooming against the reference', () => {
  for (const [name, change, grooming] of settingSets) {
    it(`${name}: identical on ${EVENTS} events`, () => {
      const settings: ClusterSettings = { p: -1, radius: 1.0, ptMin: 0, threshold: 0, recombination: 'e', ...change };
      const clusterer = new ReferenceClusterer(grid, settings);
      const reference = new ReferenceGroomer(grid, grooming, settings.radius);
      const engine = new EngineGroomer(grid, grooming, settings.radius);
      const random = seededRandom(16 + name.length);
      let oneTowerJets = 0;
      let groomedAway = 0;
      for (let k = 0; k < EVENTS; k++) {
        const event = largeRadiusEvent(grid, shapeOf(k), random);
        const jets = clusterer.cluster(event.towerIndex, event.towerEt);
        const copy = { ...jets };
        reference.groom(jets, event.towerIndex, event.towerEt);
        engine.groom(copy, event.towerIndex, event.towerEt);
        const difference = firstGroomedDifference(copy, jets);
        expect(difference, `event ${k}`).toBeNull();
        for (let n = 0; n < jets.count; n++) {
          if (jets.towerCount[n] === 1) oneTowerJets++;
          const rows = jets.trim ?? jets.softDrop!;
          if (rows.towerCount[n] < jets.towerCount[n]) groomedAway++;
        }
      }
      // the sample holds what the test is meant to cover; f_cut = 0 keeps every tower
      expect(oneTowerJets).toBeGreaterThan(10);
      if (grooming.trim?.ptFraction === 0) expect(groomedAway).toBe(0);
      else expect(groomedAway).toBeGreaterThan(10);
    });
  }

  for (const [name, grooming] of [
    ['soft drop 0.1:1', { trim: null, softDrop: { zCut: 0.1, beta: 1 } }],
    ['trimming 0.2:0.05', { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null }],
  ] as [string, GroomingSettings][]) {
    it(`${name} of made-up jets: spread over the grid, across the seam, huge and tiny et, 300 jets`, () => {
      // soft drop re-clusters on a table of the jet's live jets in increasing y
      // (assembly/groom-pairs.ts), trimming on the event grid's sequence: towers spread over the
      // grid give long searches, a jet across the seam takes the wrapped dphi, and et near the
      // spec's limits (1e150 and 1e-150) puts weights beyond the reach argument's range
      const reference = new ReferenceGroomer(grid, grooming, 1);
      const engine = new EngineGroomer(grid, grooming, 1);
      const random = seededRandom(99 + name.length);
      for (let k = 0; k < EVENTS; k++) {
        const window = k % 3 === 0 ? undefined : 4 + Math.floor(random() * 16);
        const event = smallEvent(grid, { towers: 1 + Math.floor(random() * 40), ties: k % 4 === 0, seam: k % 4 === 1, window }, random);
        const scale = k % 8 === 2 ? 1e146 : k % 8 === 5 ? 1e-147 : 1;
        const towerEt = event.towerEt.map((et) => et * scale);
        const sorted = Int32Array.from(event.towerIndex).sort();
        const jets = allocateJetSet(1);
        jets.towers = sorted;
        jets.towerCount[0] = sorted.length;
        jets.pt[0] = 100 * scale;
        const copy = { ...jets };
        reference.groom(jets, event.towerIndex, towerEt);
        engine.groom(copy, event.towerIndex, towerEt);
        expect(firstGroomedDifference(copy, jets), `jet ${k}`).toBeNull();
      }
    });
  }

  it('both groomers at once, engine clustering and grooming end to end, on 100 events', () => {
    const settings: ClusterSettings = { p: -1, radius: 1.0, ptMin: 20, threshold: 0.1, recombination: 'e' };
    const grooming: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } };
    const reference = new GroomingClusterer(new ReferenceClusterer(grid, settings), new ReferenceGroomer(grid, grooming, settings.radius));
    const engine = new GroomingClusterer(new WasmClusterer(grid, settings), new EngineGroomer(grid, grooming, settings.radius));
    const random = seededRandom(1616);
    for (let k = 0; k < 100; k++) {
      const event = largeRadiusEvent(grid, shapeOf(k), random);
      const a = engine.cluster(event.towerIndex, event.towerEt);
      const b = reference.cluster(event.towerIndex, event.towerEt);
      expect(firstJetDifference(a, b), `event ${k}`).toBeNull();
      expect(firstGroomedDifference(a, b), `event ${k}`).toBeNull();
    }
  });
});
