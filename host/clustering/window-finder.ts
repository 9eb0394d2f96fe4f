// The window finder (clustering-spec.md section 11): the fixed-window jet finder of a
// first-level trigger, offered as a ready candidate for `jetlag compare`, not a generalised-kt
// clusterer. A tower at or above seedEt that is the maximum of its W x W window (ties to the
// smaller flat index) is a seed; its jet is the sum of every tower in that window, pointing at
// the seed's centre.
//
// Data layout (allocated once per grid, reused for every event):
//   etByTower[t]    et of tower t when it passed the threshold this event, else 0
//   present[t]      1 when tower t passed the threshold this event (a cell holding 0 is no tower)
//   selected[0, n)  flat indices of this event's towers, to clear the two arrays above afterwards
//   windowColumns[iphi * columnsPerWindow + c], c < columnsPerWindow
//                   the phi columns of the window centred on column iphi, increasing, each once
//                   (columnsPerWindow = min(W, phiBins): with W > phiBins a column counts once)
//   seedTower[s], seedPt[s], seedTowerCount[s]    seed s of this event: tower, window sum, towers
//   order[0, kept)  seeds with pt >= ptMin, in output order (decreasing pt, ties to smaller tower)
// Rows of a window run increasing and its columns increasing, so a window is visited in
// increasing flat index: the order in which the spec sums it.

import { UsageError } from '../errors.js';
import { MIN_ET, makeGridTables, type GridTables } from './grid.js';
import { allocateJetSet } from './jet-set.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';

export interface WindowSettings {
  /** window side in towers, odd */
  windowTowers: number;
  /** GeV; a seed needs et >= this */
  seedEt: number;
}

export const DEFAULT_WINDOW: Readonly<WindowSettings> = Object.freeze({ windowTowers: 9, seedEt: 5 });

/** largest window side accepted; any side past twice the largest grid side covers the grid */
const WINDOW_TOWERS_MAX = 8193;

/** Throws a UsageError naming the bad value. */
export function checkWindowSettings(window: WindowSettings, where = 'window'): void {
  const { windowTowers, seedEt } = window;
  if (!Number.isInteger(windowTowers) || windowTowers < 1 || windowTowers > WINDOW_TOWERS_MAX || windowTowers % 2 === 0) {
    throw new UsageError(`${where}: the window side W must be an odd integer in 1..${WINDOW_TOWERS_MAX} towers, got ${windowTowers}`);
  }
  if (!Number.isFinite(seedEt) || seedEt < 0) {
    throw new UsageError(`${where}: the seed threshold SEEDET must be a finite number >= 0 GeV, got ${seedEt}`);
  }
}

/**
 * Reads `window`, `window:W` or `window:W:SEEDET` (W odd, in towers; SEEDET in GeV), the value
 * of `option`; the parts left out take the defaults 9 and 5. Returns null when the text does
 * not start with `window`.
 */
export function parseWindowEmulation(text: string, option = '--emulate'): WindowSettings | null {
  const trimmed = text.trim();
  if (trimmed !== 'window' && !trimmed.startsWith('window:')) return null;
  const parts = trimmed.split(':').slice(1);
  if (parts.length > 2) throw new UsageError(`${option} window:W:SEEDET takes at most two numbers, got ${JSON.stringify(text)}`);
  const number = (part: string | undefined, fallback: number): number => {
    if (part === undefined) return fallback;
    if (part.trim() === '') throw new UsageError(`${option} window:W:SEEDET has an empty number in ${JSON.stringify(text)}`);
    return Number(part);
  };
  const window = { windowTowers: number(parts[0], DEFAULT_WINDOW.windowTowers), seedEt: number(parts[1], DEFAULT_WINDOW.seedEt) };
  checkWindowSettings(window, `${option} window:W:SEEDET`);
  return window;
}

/** The name of a window finder as a clusterer, engine and jets file engine: `window-9-5`. */
export type WindowEngineName = `window-${number}-${number}`;

export function windowFinderName(window: WindowSettings): WindowEngineName {
  return `window-${window.windowTowers}-${window.seedEt}`;
}

/** The settings back from a name of windowFinderName; null for any other name. */
export function windowSettingsOfName(name: string): WindowSettings | null {
  const match = /^window-(\d+)-(.+)$/.exec(name);
  if (!match) return null;
  const window = { windowTowers: Number(match[1]), seedEt: Number(match[2]) };
  checkWindowSettings(window, name);
  return window;
}

/** A one-line description for labels and reports. */
export function describeWindow(window: WindowSettings): string {
  return `window finder ${window.windowTowers}x${window.windowTowers} towers, seed et >= ${window.seedEt} GeV`;
}

export class WindowFinder implements Clusterer {
  readonly name: string;
  /** threshold and ptMin apply; p, radius and recombination are carried for the file header only */
  readonly settings: ClusterSettings;
  readonly window: WindowSettings;
  withTowers = true;
  private readonly tables: GridTables;
  private readonly etByTower: Float64Array;
  private readonly present: Uint8Array;
  private readonly selected: Int32Array;
  private readonly columnsPerWindow: number;
  private readonly windowColumns: Int32Array;
  private readonly seedTower: Int32Array;
  private readonly seedPt: Float64Array;
  private readonly seedTowerCount: Int32Array;
  private readonly order: Int32Array;

  constructor(grid: Grid, settings: ClusterSettings, window: WindowSettings = DEFAULT_WINDOW) {
    checkWindowSettings(window);
    this.window = { ...window };
    this.settings = { ...settings };
    this.name = windowFinderName(window);
    this.tables = makeGridTables(grid);
    const total = this.tables.towerTotal;
    this.etByTower = new Float64Array(total);
    this.present = new Uint8Array(total);
    this.selected = new Int32Array(total);
    this.seedTower = new Int32Array(total);
    this.seedPt = new Float64Array(total);
    this.seedTowerCount = new Int32Array(total);
    this.order = new Int32Array(total);

    const phiBins = grid.phiBins;
    const half = (window.windowTowers - 1) / 2;
    this.columnsPerWindow = Math.min(window.windowTowers, phiBins);
    this.windowColumns = new Int32Array(phiBins * this.columnsPerWindow);
    for (let iphi = 0; iphi < phiBins; iphi++) {
      const base = iphi * this.columnsPerWindow;
      if (window.windowTowers >= phiBins) {
        for (let c = 0; c < phiBins; c++) this.windowColumns[base + c] = c;
        continue;
      }
      // the columns iphi - half .. iphi + half modulo phiBins, written out in increasing order
      let filled = 0;
      for (let c = 0; c < phiBins; c++) {
        const offset = (((c - iphi) % phiBins) + phiBins) % phiBins; // 0 .. phiBins-1
        if (offset <= half || offset >= phiBins - half) this.windowColumns[base + filled++] = c;
      }
    }
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const { etByTower, present, selected, windowColumns, seedTower, seedPt, seedTowerCount, order } = this;
    const { etaBins, phiBins } = this.tables.grid;
    const columnsPerWindow = this.columnsPerWindow;
    const half = (this.window.windowTowers - 1) / 2;
    const seedEt = this.window.seedEt;
    const { threshold, ptMin } = this.settings;

    // the threshold of spec section 1, onto the dense grid
    let selectedCount = 0;
    for (let k = 0; k < towerIndex.length; k++) {
      const et = towerEt[k];
      if (!(et > threshold && et >= MIN_ET)) continue;
      const t = towerIndex[k];
      etByTower[t] = et;
      present[t] = 1;
      selected[selectedCount++] = t;
    }

    // seeds and their window sums in one walk per candidate: the walk stops at the first tower
    // that beats the candidate, and otherwise has summed the window in increasing flat index
    let seedCount = 0;
    for (let k = 0; k < selectedCount; k++) {
      const t = selected[k];
      const etSeed = etByTower[t];
      if (!(etSeed >= seedEt)) continue;
      const ieta = Math.floor(t / phiBins);
      const columnBase = (t - ieta * phiBins) * columnsPerWindow;
      const rowFirst = ieta - half < 0 ? 0 : ieta - half;
      const rowLast = ieta + half > etaBins - 1 ? etaBins - 1 : ieta + half;
      let isSeed = true;
      let pt = 0;
      let towersInWindow = 0;
      for (let row = rowFirst; row <= rowLast && isSeed; row++) {
        const rowBase = row * phiBins;
        for (let c = 0; c < columnsPerWindow; c++) {
          const u = rowBase + windowColumns[columnBase + c];
          if (present[u] === 0) continue;
          const et = etByTower[u];
          if (u < t ? !(etSeed > et) : !(etSeed >= et)) { isSeed = false; break; }
          pt += et;
          towersInWindow++;
        }
      }
      if (!isSeed || !(pt >= ptMin)) continue;
      seedTower[seedCount] = t;
      seedPt[seedCount] = pt;
      seedTowerCount[seedCount] = towersInWindow;
      seedCount++;
    }

    // output order: decreasing pt, ties to the smaller seed tower. Insertion sort: seeds are a
    // few per event, since no seed lies inside another seed's window.
    for (let s = 0; s < seedCount; s++) {
      let position = s;
      while (position > 0) {
        const before = order[position - 1];
        if (seedPt[before] > seedPt[s] || (seedPt[before] === seedPt[s] && seedTower[before] < seedTower[s])) break;
        order[position] = before;
        position--;
      }
      order[position] = s;
    }

    const tables = this.tables;
    const jets = allocateJetSet(seedCount);
    let towerTotal = 0;
    for (let n = 0; n < seedCount; n++) {
      const s = order[n];
      const t = seedTower[s];
      const ieta = Math.floor(t / phiBins);
      const iphi = t - ieta * phiBins;
      const pt = seedPt[s];
      // a massless four-vector at the seed's centre, built as in spec section 2
      jets.px[n] = pt * tables.cosPhi[iphi];
      jets.py[n] = pt * tables.sinPhi[iphi];
      jets.pz[n] = pt * tables.sinhEta[ieta];
      jets.energy[n] = pt * tables.coshEta[ieta];
      jets.pt[n] = pt;
      jets.rapidity[n] = tables.etaCentre[ieta];
      jets.phi[n] = tables.phiCentre[iphi];
      jets.mass[n] = 0; // reported as 0, not computed (spec section 11)
      jets.towerCount[n] = seedTowerCount[s];
      jets.towerStart[n] = towerTotal;
      towerTotal += seedTowerCount[s];
    }
    if (this.withTowers) {
      const towers = new Int32Array(towerTotal);
      let written = 0;
      for (let n = 0; n < seedCount; n++) {
        const t = seedTower[order[n]];
        const ieta = Math.floor(t / phiBins);
        const columnBase = (t - ieta * phiBins) * columnsPerWindow;
        const rowFirst = ieta - half < 0 ? 0 : ieta - half;
        const rowLast = ieta + half > etaBins - 1 ? etaBins - 1 : ieta + half;
        for (let row = rowFirst; row <= rowLast; row++) {
          const rowBase = row * phiBins;
          for (let c = 0; c < columnsPerWindow; c++) {
            const u = rowBase + windowColumns[columnBase + c];
            if (present[u] !== 0) towers[written++] = u;
          }
        }
      }
      jets.towers = towers;
    }

    // leave the grid empty for the next event
    for (let k = 0; k < selectedCount; k++) {
      etByTower[selected[k]] = 0;
      present[selected[k]] = 0;
    }
    return jets;
  }
}
