// The reference's sequence without beam candidates (clustering-spec.md section 12, soft drop's
// re-clustering: section 4 with only pairs competing, down to one jet) against the brute force,
// step for step, and the merging tree it hands to soft drop.

import { describe, expect, it } from 'vitest';
import { makeGridTables, selectTowers } from '../host/clustering/grid.js';
import { clusterReference, type ClusterStep, type ClusterTree } from '../host/clustering/reference.js';
import type { ClusterSettings, Grid } from '../host/types.js';
import { clusterBruteForce, type BruteForceStep } from './support/brute-force.js';
import { seededRandom, smallEvent } from './support/small-events.js';

const grid: Grid = { etaMin: -1.5, etaMax: 1.5, etaBins: 15, phiBins: 20 };
const tables = makeGridTables(grid);
const unitCambridge: ClusterSettings = { p: 0, radius: 1, ptMin: 0, threshold: 0, recombination: 'e' };

describe('reference without beam candidates', () => {
  it('merges in the brute force order down to one jet, on 200 small events (ties, seam, spread)', () => {
    const random = seededRandom(1612);
    for (let k = 0; k < 200; k++) {
      const shape = { towers: 1 + Math.floor(random() * 40), ties: k % 3 === 0, seam: k % 5 === 1 };
      const event = smallEvent(grid, shape, random);
      const selected = selectTowers(event.towerIndex, event.towerEt, 0);
      const history: ClusterStep[] = [];
      const jets = clusterReference(tables, selected.towerIndex, selected.towerEt, unitCambridge, { pairsOnly: true, history });
      const expected: BruteForceStep[] = [];
      const oracle = clusterBruteForce(grid, event.towerIndex, event.towerEt, unitCambridge, { pairsOnly: true, history: expected });
      expect(history, `event ${k}`).toEqual(expected);
      expect(jets.count).toBe(selected.towerIndex.length === 0 ? 0 : 1);
      expect(Array.from(jets.px)).toEqual(Array.from(oracle.px));
    }
  });

  it('hands over the merging tree: parents, tower counts and the root as the one jet', () => {
    const random = seededRandom(7);
    const event = smallEvent(grid, { towers: 30 }, random);
    const selected = selectTowers(event.towerIndex, event.towerEt, 0);
    const tree = {} as ClusterTree;
    const history: ClusterStep[] = [];
    const jets = clusterReference(tables, selected.towerIndex, selected.towerEt, unitCambridge, { pairsOnly: true, tree, history });
    const n = selected.towerIndex.length;
    expect(tree.jetCount).toBe(2 * n - 1);
    history.forEach((step, k) => {
      if (step.kind !== 'merge') throw new Error('a beam step without beams');
      expect([tree.parentA[n + k], tree.parentB[n + k]]).toEqual([step.a, step.b]);
      expect(tree.towerCount[n + k]).toBe(tree.towerCount[step.a] + tree.towerCount[step.b]);
    });
    expect(tree.px[tree.jetCount - 1]).toBe(jets.px[0]);
    expect(tree.towerCount[tree.jetCount - 1]).toBe(n);
  });
});
