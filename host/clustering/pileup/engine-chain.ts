// Over 300 lines on purpose: one chain, whose steps share the flat arrays reserved once per chain, kept in one class.
// The engine's pileup chain (clustering-spec.md part two, sections 8-10), bit for bit the
// reference's (chain.ts) but on flat arrays reserved once per chain:
//   threshold -> SoftKiller -> ghosts -> WebAssembly clustering -> areas, ρ, subtraction -> ptMin
// Ghosts are towers: with areas (and for the kt estimator of ρ) the engine makes the
// ghost-filled grid itself from the real towers (ghost-grid-engine.ts) and the chain reads its
// jets in place; the steps around it are a few passes over the event's towers or the grid's
// cells, cheap beside the clustering. The last steps, from the engine's final jets to the
// reported ones, are in engine-jets.ts.
//
// Layout (C = grid cells, P = patches of the SoftKiller or ρ layout):
//   cellEt f64[C]       et of the real tower in each cell this event, 0 where none (so that a
//                       patch sum may add every cell: adding +0 changes no sum's bits)
//   cellReal u8[C]      1 while the cell holds a real tower (after threshold and SoftKiller)
//   realCells i32[C]    the cells holding real towers, realCount of them, in input order
//   inputIndex i32[C]   inputEt f64[C]    the clustering's input without areas: the real towers
//   patchValue f64[P]   per patch: SoftKiller's maxima, then ρ's sums and densities
//   median f64[C]       sort scratch for a median (P <= C values, or kt jets <= C)

import { MIN_ET, makeGridTables } from '../grid.js';
import { ENGINE_INDEX_OUTSIDE, ENGINE_INDEX_REPEATED, ENGINE_OK, loadEngineModule } from '../engine-module.js';
import { WasmClusterer } from '../engine.js';
import type { ClusterSettings, Clusterer, Grid, JetSet, PileupSettings, RhoEstimator } from '../../types.js';
import { rhoEstimatorOf } from './chain.js';
import { ReportedJets } from './engine-jets.js';
import { GhostGridEngine } from './ghost-grid-engine.js';
import { cellAreaOf, makePatchLayout, type PatchLayout } from './patches.js';
import { checkPileupSettings } from './settings.js';

/** the chain's stages, as rows of EnginePileupClusterer.stageNs */
export const STAGE_SOFTKILLER = 0;
/** threshold, ghosts and the clustering itself */
export const STAGE_CLUSTERING = 1;
export const STAGE_RHO_PATCHES = 2;
/** the kt-ρ estimator's second clustering */
export const STAGE_RHO_KT = 3;
/** areas, subtraction, ptMin, order and the reported jets' arrays */
export const STAGE_SUBTRACTION = 4;
export const STAGE_COUNT = 5;
export const STAGE_NAMES = ['softkiller', 'clustering', 'rho-patches', 'rho-kt', 'subtraction'] as const;

export interface EngineChainOptions {
  module?: WebAssembly.Module;
  debug?: boolean;
}

export class EnginePileupClusterer implements Clusterer {
  readonly name = 'wasm';
  readonly settings: ClusterSettings;
  readonly pileup: PileupSettings;
  /** status of the last event: ENGINE_OK, or ENGINE_INDEX_OUTSIDE / ENGINE_INDEX_REPEATED */
  status = ENGINE_OK;
  /** the last event's time in each stage (STAGE_*), ns; 0 for a stage that is off */
  readonly stageNs = new Float64Array(STAGE_COUNT);

  private readonly grid: Grid;
  private readonly cellCount: number;
  private readonly cellArea: number;
  private readonly rho: RhoEstimator | null;
  /** the clustering without areas, and with them */
  private readonly clusterer: WasmClusterer | null;
  private readonly ghostClusterer: GhostGridEngine | null;
  private readonly ktClusterer: GhostGridEngine | null;
  private readonly softKillerPatches: PatchLayout | null;
  private readonly rhoPatches: PatchLayout | null;

  private readonly reported: ReportedJets;

  private readonly cellEt: Float64Array;
  private readonly cellReal: Uint8Array;
  private readonly realCells: Int32Array;
  private readonly inputIndex: Int32Array;
  private readonly inputEt: Float64Array;
  private readonly inputStart = new Int32Array(2);
  private readonly patchValue: Float64Array;
  private readonly median: Float64Array;

  constructor(grid: Grid, settings: ClusterSettings, pileup: PileupSettings, command = 'cluster', options: EngineChainOptions = {}) {
    checkPileupSettings(grid, settings, pileup, command);
    this.grid = grid;
    this.settings = { ...settings };
    this.pileup = { ...pileup };
    this.rho = rhoEstimatorOf(pileup);
    this.cellCount = grid.etaBins * grid.phiBins;
    this.cellArea = cellAreaOf(grid);
    // the engine sees towers already past the threshold, and every final jet (ptMin comes last)
    const module = options.module ?? loadEngineModule(options.debug ?? false);
    const tables = makeGridTables(grid);
    const engineSettings = { ...settings, ptMin: 0, threshold: 0 };
    this.clusterer = pileup.areas ? null : new WasmClusterer(grid, engineSettings, { module });
    this.ghostClusterer = pileup.areas ? new GhostGridEngine(tables, engineSettings, pileup.ghostEt, module) : null;
    this.ktClusterer = this.rho?.kind === 'kt'
      ? new GhostGridEngine(tables, { p: 1, radius: this.rho.radius, ptMin: 0, threshold: 0, recombination: 'e' }, pileup.ghostEt, module)
      : null;
    this.softKillerPatches = pileup.softKiller ? makePatchLayout(grid, pileup.softKiller) : null;
    this.rhoPatches = this.rho?.kind === 'patches' ? makePatchLayout(grid, this.rho.patch) : null;

    const cells = this.cellCount;
    const patches = Math.max(this.softKillerPatches?.patchCount ?? 0, this.rhoPatches?.patchCount ?? 0);
    this.reported = new ReportedJets(cells, this.cellArea, pileup.areas, pileup.subtract, settings.ptMin);
    this.cellEt = new Float64Array(cells);
    this.cellReal = new Uint8Array(cells);
    this.realCells = new Int32Array(cells);
    this.inputIndex = new Int32Array(pileup.areas ? 0 : cells);
    this.inputEt = new Float64Array(pileup.areas ? 0 : cells);
    this.patchValue = new Float64Array(patches);
    this.median = new Float64Array(Math.max(patches, cells));
  }

  /** One event's towers, any order, before the threshold; throws on a bad index like WasmClusterer. */
  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const jets = this.clusterEvent(towerIndex, towerEt, 0, towerIndex.length);
    if (jets === null) throw new Error(`engine: ${this.status === ENGINE_INDEX_OUTSIDE ? 'a tower index lies outside the grid' : 'a tower index appears twice'}`);
    return jets;
  }

  /** Towers from..to of the arrays as one event; null with `status` set for a bad index. */
  clusterEvent(towerIndex: Int32Array, towerEt: Float64Array, from: number, to: number): JetSet | null {
    const { cellEt, cellReal, realCells } = this;
    const cells = this.cellCount;
    const stageNs = this.stageNs;
    stageNs.fill(0);
    let clock = performance.now();

    // threshold (spec section 1), and the engine's index checks: outside first, then repeats
    this.status = ENGINE_OK;
    for (let k = from; k < to; k++) {
      if (towerIndex[k] >>> 0 >= cells) {
        this.status = ENGINE_INDEX_OUTSIDE;
        return null;
      }
    }
    cellReal.fill(0);
    cellEt.fill(0);
    const threshold = this.settings.threshold;
    let realCount = 0;
    for (let k = from; k < to; k++) {
      const et = towerEt[k];
      if (!(et > threshold && et >= MIN_ET)) continue;
      const t = towerIndex[k];
      if (cellReal[t] === 1) {
        this.status = ENGINE_INDEX_REPEATED;
        return null;
      }
      cellReal[t] = 1;
      cellEt[t] = et;
      realCells[realCount++] = t;
    }
    clock = this.lap(STAGE_CLUSTERING, clock);

    let etCut = 0;
    let killed = 0;
    if (this.softKillerPatches) {
      etCut = this.softKillerCut(this.softKillerPatches, realCount);
      let kept = 0;
      for (let k = 0; k < realCount; k++) {
        const t = realCells[k];
        if (cellEt[t] < etCut) {
          cellReal[t] = 0;
          cellEt[t] = 0;
        } else {
          realCells[kept++] = t;
        }
      }
      killed = realCount - kept;
      realCount = kept;
      clock = this.lap(STAGE_SOFTKILLER, clock);
    }

    // the clustering's input: the real towers (the engine orders them; with areas it puts a
    // ghost on every other cell)
    const ghosts = this.ghostClusterer;
    if (ghosts) this.writeRealTowers(ghosts.realIndex, ghosts.realEt, realCount);
    else this.writeRealTowers(this.inputIndex, this.inputEt, realCount);
    clock = this.lap(STAGE_CLUSTERING, clock);

    let rho = 0;
    if (this.rhoPatches) {
      rho = this.patchRho(this.rhoPatches);
      clock = this.lap(STAGE_RHO_PATCHES, clock);
    } else if (this.ktClusterer) {
      rho = this.ktRho(this.ktClusterer, realCount);
      clock = this.lap(STAGE_RHO_KT, clock);
    }

    let jets: JetSet;
    if (this.ghostClusterer) {
      const rows = this.ghostClusterer.cluster(realCount, true);
      clock = this.lap(STAGE_CLUSTERING, clock);
      jets = this.reported.report(rows, rows.count, cellReal, rho, etCut, killed);
    } else {
      this.inputStart[1] = realCount;
      const batch = (this.clusterer as WasmClusterer).clusterBatchReusing(1, this.inputStart, this.inputIndex, this.inputEt, true);
      clock = this.lap(STAGE_CLUSTERING, clock);
      jets = this.reported.report(batch, batch.pt.length, cellReal, rho, etCut, killed);
    }
    this.lap(STAGE_SUBTRACTION, clock);
    return jets;
  }

  /** the event's real towers, in input order, into an engine's input */
  private writeRealTowers(index: Int32Array, et: Float64Array, realCount: number): void {
    const { realCells, cellEt } = this;
    for (let k = 0; k < realCount; k++) {
      const t = realCells[k];
      index[k] = t;
      et[k] = cellEt[t];
    }
  }

  /** adds the time since `since` (ms, performance.now()) to a stage; returns the time now */
  private lap(stage: number, since: number): number {
    const now = performance.now();
    this.stageNs[stage] += (now - since) * 1e6;
    return now;
  }

  /** SoftKiller's cut: the median over patches of each patch's hardest real tower (spec section 10) */
  private softKillerCut(layout: PatchLayout, realCount: number): number {
    const maximum = this.patchValue;
    maximum.fill(0, 0, layout.patchCount);
    for (let k = 0; k < realCount; k++) {
      const t = this.realCells[k];
      const patch = layout.patchOfTower[t];
      if (this.cellEt[t] > maximum[patch]) maximum[patch] = this.cellEt[t];
    }
    return this.medianOf(maximum, layout.patchCount);
  }

  /** ρ from patches (spec section 9): sums over every cell in increasing flat index, densities, median */
  private patchRho(layout: PatchLayout): number {
    const { patchValue: value, cellEt, cellCount, cellArea } = this;
    const { patchOfTower, cellsInPatch, patchCount } = layout;
    value.fill(0, 0, patchCount);
    for (let t = 0; t < cellCount; t++) value[patchOfTower[t]] += cellEt[t];
    for (let patch = 0; patch < patchCount; patch++) {
      value[patch] = value[patch] / (cellsInPatch[patch] * cellArea);
    }
    return this.medianOf(value, layout.patchCount);
  }

  /** ρ from kt jets with ghosts (spec section 9), on the ghost-filled grid of the real towers */
  private ktRho(kt: GhostGridEngine, realCount: number): number {
    this.writeRealTowers(kt.realIndex, kt.realEt, realCount);
    const jets = kt.cluster(realCount, false);
    const radius = (this.rho as { radius: number }).radius;
    const low = this.grid.etaMin + radius;
    const high = this.grid.etaMax - radius;
    // jets come in decreasing pt, ties to the smaller index: the first two inside are the hardest
    let inside = 0;
    let kept = 0;
    for (let r = 0; r < jets.count; r++) {
      const y = jets.rapidity[r];
      if (!(low < y && y < high)) continue;
      if (inside++ < 2) continue;
      this.median[kept++] = jets.pt[r] / (jets.towerCount[r] * this.cellArea);
    }
    return this.medianOf(this.median, kept);
  }

  /**
   * The spec's median of values[0..n) (part two, notation): the same one or two middle elements
   * a full sort would give, found by selection in the scratch (a sort of 130 patches costs
   * several µs, more than the rest of SoftKiller).
   */
  private medianOf(values: Float64Array, n: number): number {
    if (n === 0) return 0;
    const scratch = this.median;
    if (values !== scratch) for (let k = 0; k < n; k++) scratch[k] = values[k];
    const upper = n >> 1;
    selectNth(scratch, n, upper);
    if (n % 2 === 1) return scratch[upper];
    // the lower middle element is the largest of those selection left below the upper one
    let lower = scratch[0];
    for (let k = 1; k < upper; k++) if (scratch[k] > lower) lower = scratch[k];
    return 0.5 * (lower + scratch[upper]);
  }
}

/**
 * Rearranges values[0..n) so that values[nth] holds the element a sort would put there, with no
 * larger one before it and no smaller one after it (Hoare's selection, middle pivot). Values
 * must not hold NaN.
 */
function selectNth(values: Float64Array, n: number, nth: number): void {
  let low = 0;
  let high = n - 1;
  while (low < high) {
    const pivot = values[(low + high) >> 1];
    let i = low;
    let j = high;
    while (i <= j) {
      while (values[i] < pivot) i++;
      while (values[j] > pivot) j--;
      if (i <= j) {
        const swap = values[i];
        values[i] = values[j];
        values[j] = swap;
        i++;
        j--;
      }
    }
    if (nth <= j) high = j;
    else if (nth >= i) low = i;
    else return;
  }
}
