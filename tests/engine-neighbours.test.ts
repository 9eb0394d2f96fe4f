// The engine's first nearest-neighbour table against one derived from a general-purpose
// Delaunay triangulation (npm delaunator 5.1.0). A point's nearest neighbour is always one of its
// Delaunay neighbours (the nearest-neighbour graph is a subgraph of the Delaunay triangulation;
// the tiled nearest-neighbour method of arXiv:hep-ph/0512210 rests on the same geometry). The φ
// periodicity is handled by copying every point one turn up and one turn down.

import Delaunator from 'delaunator';
import { describe, expect, it } from 'vitest';
import { WasmClusterer } from '../host/clustering/engine.js';
import { makeGridTables, selectTowers } from '../host/clustering/grid.js';
import { weightOf, deltaR2 } from '../host/clustering/reference.js';
import { DEFAULT_GRID, type ClusterSettings, type Grid } from '../host/types.js';
import { makeRandom, randomEvent } from './support/random-events.js';

const TWO_PI = 2 * Math.PI;

/**
 * For each selected tower, the jet index of its neighbour under the spec's key (section 4),
 * sought among its Delaunay neighbours only, within the engine's reach R*R*(1 + 1e-9); -1 if none.
 */
function delaunayNeighbours(grid: Grid, towerIndex: Int32Array, towerEt: Float64Array, settings: ClusterSettings): Int32Array {
  const tables = makeGridTables(grid);
  const n = towerIndex.length;
  const y = new Float64Array(n);
  const phi = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const ieta = Math.floor(towerIndex[i] / grid.phiBins);
    y[i] = tables.etaCentre[ieta];
    phi[i] = tables.phiCentre[towerIndex[i] - ieta * grid.phiBins];
  }
  // copy k of point i is point k * n + i, shifted by (k - 1) turns in phi
  const coords = new Float64Array(6 * n);
  for (let k = 0; k < 3; k++) {
    for (let i = 0; i < n; i++) {
      coords[2 * (k * n + i)] = y[i];
      coords[2 * (k * n + i) + 1] = phi[i] + (k - 1) * TWO_PI;
    }
  }
  const adjacent: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  const triangles = new Delaunator(coords).triangles;
  for (let t = 0; t < triangles.length; t += 3) {
    for (let e = 0; e < 3; e++) {
      const a = triangles[t + e] % n;
      const b = triangles[t + ((e + 1) % 3)] % n;
      if (a !== b) {
        adjacent[a].add(b);
        adjacent[b].add(a);
      }
    }
  }
  const invR2 = 1 / (settings.radius * settings.radius);
  const reach2 = settings.radius * settings.radius * (1 + 1e-9);
  const result = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    const w = weightOf(towerEt[i] * towerEt[i], settings.p);
    let bestKey = Infinity;
    for (const j of adjacent[i]) {
      const d = deltaR2(y[i], phi[i], y[j], phi[j]);
      if (!(d <= reach2)) continue;
      const key = (w * d) * invR2;
      if (key < bestKey || (key === bestKey && j < result[i])) {
        bestKey = key;
        result[i] = j;
      }
    }
  }
  return result;
}

interface NeighbourCheck {
  failures: string[];
  /** towers checked, and those given the same neighbour by both tables (so the tables are not empty) */
  towers: number;
  paired: number;
}

function checkEvents(grid: Grid, settings: ClusterSettings, seed: number, events: number, towers: () => number, ties = false): NeighbourCheck {
  const engine = new WasmClusterer(grid, settings, { debug: true });
  const random = makeRandom(seed);
  const failures: string[] = [];
  let checked = 0;
  let paired = 0;
  for (let e = 0; e < events; e++) {
    const event = randomEvent(grid, { towers: towers(), hardJets: 2, ties }, random);
    const selected = selectTowers(event.towerIndex, event.towerEt, settings.threshold);
    if (selected.towerIndex.length < 3) continue;
    const expected = delaunayNeighbours(grid, selected.towerIndex, selected.towerEt, settings);
    const actual = engine.firstNeighbourTable(event.towerIndex, event.towerEt);
    checked += expected.length;
    for (let i = 0; i < expected.length; i++) {
      if (expected[i] >= 0 && actual[i] === expected[i]) paired++;
      if (actual[i] !== expected[i]) {
        failures.push(`event ${e}, tower ${i} (flat ${selected.towerIndex[i]}): engine ${actual[i]}, Delaunay ${expected[i]}`);
        break;
      }
    }
  }
  return { failures, towers: checked, paired };
}

/** no tower differs, and most towers have a neighbour in both tables (the tables are not empty) */
function expectSameTables(check: NeighbourCheck): void {
  expect(check.failures).toEqual([]);
  expect(check.paired).toBeGreaterThan(0.9 * check.towers);
}

describe('the first nearest-neighbour table equals the one from a Delaunay triangulation', () => {
  for (const p of [-1, 0, 1]) {
    for (const radius of [0.4, 1.5]) {
      it(`for p = ${p}, R = ${radius}, on random events of 3 to 3200 towers`, () => {
        const settings: ClusterSettings = { p, radius, ptMin: 0, threshold: 0, recombination: 'e' };
        let size = 0;
        const sizes = [3, 12, 60, 300, 1200, 3200];
        expectSameTables(checkEvents(DEFAULT_GRID, settings, 31 + p * 7 + radius * 10, 30, () => sizes[size++ % sizes.length]));
      }, 60_000);
    }
  }

  it('with many equal energies, where the key ties and the smaller index must win', () => {
    const settings: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };
    expectSameTables(checkEvents(DEFAULT_GRID, settings, 5, 40, () => 400, true));
  }, 60_000);

  it('on a grid of few phi columns, where neighbours are found across the seam both ways', () => {
    const grid: Grid = { etaMin: -1, etaMax: 1, etaBins: 20, phiBins: 6 };
    const settings: ClusterSettings = { p: 0, radius: 0.8, ptMin: 0, threshold: 0, recombination: 'e' };
    expectSameTables(checkEvents(grid, settings, 77, 40, () => 40));
  }, 60_000);
});
