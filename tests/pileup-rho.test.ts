// The background density ρ (clustering-spec.md section 9): patches and kt jets.

import { describe, expect, it } from 'vitest';
import { makeGridTables } from '../host/clustering/grid.js';
import { rhoFromKtJets, rhoFromPatches } from '../host/clustering/pileup/rho.js';
import { DEFAULT_GRID, type Grid } from '../host/types.js';

/** the spec's cell area (part two, notation), written out here rather than imported */
function cellAreaOf(grid: Grid): number {
  return ((grid.etaMax - grid.etaMin) / grid.etaBins) * ((2 * Math.PI) / grid.phiBins);
}

/** every cell of the grid with the same et, in increasing flat index */
function uniformEvent(grid: Grid, et: number) {
  const total = grid.etaBins * grid.phiBins;
  return { towerIndex: Int32Array.from({ length: total }, (_, t) => t), towerEt: new Float64Array(total).fill(et) };
}

/** distance in units in the last place of b */
function ulpsApart(a: number, b: number): number {
  const ulp = 2 ** (Math.floor(Math.log2(Math.abs(b))) - 52);
  return Math.abs(a - b) / ulp;
}

describe('rho from patches', () => {
  it('of a uniform event of 1 GeV per tower is 1 / cellArea to one ulp, with the default 5:5 patches', () => {
    const event = uniformEvent(DEFAULT_GRID, 1);
    const rho = rhoFromPatches(DEFAULT_GRID, event.towerIndex, event.towerEt, { etaRows: 5, phiColumns: 5 });
    // a uniform density is its own median: S / (cells * cellArea) with S = cells (spec section 9)
    expect(ulpsApart(rho, 1 / cellAreaOf(DEFAULT_GRID))).toBeLessThanOrEqual(1);
  }, 60_000);

  it('is the median of the patch densities, counting the smaller last patches by their own cells', () => {
    // 4 x 4 grid cut 2:3: patches of 2 x 3 cells (columns 0-2) and 2 x 1 cells (column 3)
    const grid: Grid = { etaMin: -2, etaMax: 2, etaBins: 4, phiBins: 4 };
    const a = cellAreaOf(grid);
    const towerIndex = Int32Array.from([0, 1, 3, 5, 7, 9, 15]);
    const towerEt = Float64Array.from([6, 3, 4, 3, 2, 12, 1]);
    // patch (0,0): cells 0-2, 4-6 hold 6 + 3 + 3 = 12 over 6 cells; (0,1): cells 3, 7 hold 4 + 2
    // over 2; (1,0): cell 9 holds 12 over 6; (1,1): cell 15 holds 1 over 2
    const densities = [12 / (6 * a), 6 / (2 * a), 12 / (6 * a), 1 / (2 * a)].sort((x, y) => x - y);
    const rho = rhoFromPatches(grid, towerIndex, towerEt, { etaRows: 2, phiColumns: 3 });
    expect(rho).toBe(0.5 * (densities[1] + densities[2]));
  }, 60_000);

  it('is 0 for an event without towers: every patch density is 0', () => {
    expect(rhoFromPatches(DEFAULT_GRID, new Int32Array(0), new Float64Array(0), { etaRows: 5, phiColumns: 5 })).toBe(0);
  }, 60_000);
});

describe('rho from kt jets', () => {
  // 3 rows of 1 in eta, 4 columns of pi/2 in phi: at RR = 0.6 no two cells are within RR, so
  // every tower and every ghost is a jet of its own with the area of one cell, and only the
  // middle row (y = 0) lies inside -0.9 < y < 0.9
  const grid: Grid = { etaMin: -1.5, etaMax: 1.5, etaBins: 3, phiBins: 4 };
  const tables = makeGridTables(grid);
  const a = cellAreaOf(grid);

  it('takes jets inside etaMin + RR < y < etaMax - RR, drops the two hardest, and counts pure-ghost jets', () => {
    // middle row (y = 0) holds 10, 7 and 3 GeV and one ghost; the outer rows' 100 GeV lie outside
    const towerIndex = Int32Array.from([1, 4, 5, 6, 9]);
    const towerEt = Float64Array.from([100, 7, 10, 3, 100]);
    const rho = rhoFromKtJets(tables, towerIndex, towerEt, 0.6, 1e-100);
    // left after dropping 10 and 7: the 3 GeV tower and the ghost of column 3
    expect(rho).toBe(0.5 * (1e-100 / a + 3 / a));
  }, 60_000);

  it('is 0 when the grid has no jet inside the rapidity window', () => {
    const towerIndex = Int32Array.from([4, 5, 6, 7]);
    const towerEt = Float64Array.from([1, 2, 3, 4]);
    expect(rhoFromKtJets(tables, towerIndex, towerEt, 1.5, 1e-100)).toBe(0);
  }, 60_000);

  it('of a uniform event lies within 3 % below 1 / cellArea (jets add towers as vectors)', () => {
    const small: Grid = { etaMin: -1.5, etaMax: 1.5, etaBins: 30, phiBins: 32 };
    const event = uniformEvent(small, 1);
    const rho = rhoFromKtJets(makeGridTables(small), event.towerIndex, event.towerEt, 0.4, 1e-100);
    // arXiv:0707.1378: the median of pt / area estimates the uniform density
    expect(rho).toBeLessThanOrEqual(1 / cellAreaOf(small));
    expect(rho).toBeGreaterThan(0.97 / cellAreaOf(small));
  }, 60_000);
});
