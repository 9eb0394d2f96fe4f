// The engine's pileup chain (clustering-spec.md part two, sections 8-10), bit for bit the
// reference's (chain.ts) but on flat arrays reserved once per chain:
//   threshold -> SoftKiller -> ghosts -> WebAssembly clustering -> areas, ρ, subtraction -> ptMin
// Ghosts are towers, so the engine clusters the ghost-filled grid as it is; the steps around it
// are a few passes over the grid's cells, cheap beside the clustering.
//
// Layout (C = grid cells, P = patches of the SoftKiller or ρ layout, J = C jets at most):
//   cellEt f64[C]       et of the real tower in each cell, this event (valid where cellReal = 1)
//   cellReal u8[C]      1 while the cell holds a real tower (after threshold and SoftKiller)
//   inputIndex i32[C]   inputEt f64[C]    the clustering's input: real towers, and ghosts with areas
//   ktIndex i32[C]      ktEt f64[C]       the kt-ρ clustering's input when areas are off
//   patchValue f64[P]   per patch: SoftKiller's maxima, then ρ's sums and densities
//   median f64[max(P, J)]                 sort scratch for a median
//   jet* [J]            the reported jets before ptMin and ordering, row = engine output rank
//   order i32[J]        their output permutation

import { MIN_ET } from '../grid.js';
import { ENGINE_INDEX_OUTSIDE, ENGINE_INDEX_REPEATED, ENGINE_OK, WasmClusterer, type BatchJets } from '../engine.js';
import { allocateJetSet } from '../jet-set.js';
import type { ClusterSettings, Clusterer, Grid, JetSet, PileupSettings, RhoEstimator } from '../../types.js';
import { rhoEstimatorOf } from './chain.js';
import { cellAreaOf, makePatchLayout, type PatchLayout } from './patches.js';
import { checkPileupSettings } from './settings.js';

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

  private readonly grid: Grid;
  private readonly cellCount: number;
  private readonly cellArea: number;
  private readonly rho: RhoEstimator | null;
  private readonly clusterer: WasmClusterer;
  private readonly ktClusterer: WasmClusterer | null;
  private readonly softKillerPatches: PatchLayout | null;
  private readonly rhoPatches: PatchLayout | null;

  private readonly cellEt: Float64Array;
  private readonly cellReal: Uint8Array;
  private readonly inputIndex: Int32Array;
  private readonly inputEt: Float64Array;
  private readonly ktIndex: Int32Array;
  private readonly ktEt: Float64Array;
  private readonly inputStart = new Int32Array(2);
  private readonly patchValue: Float64Array;
  private readonly median: Float64Array;
  private readonly jetPx: Float64Array;
  private readonly jetPy: Float64Array;
  private readonly jetPz: Float64Array;
  private readonly jetEnergy: Float64Array;
  private readonly jetPt: Float64Array;
  private readonly jetMass: Float64Array;
  private readonly jetPtRaw: Float64Array;
  private readonly jetArea: Float64Array;
  private readonly jetGhosts: Int32Array;
  private readonly jetReal: Int32Array;
  private readonly jetIndex: Int32Array;
  private readonly jetRow: Int32Array;
  private readonly order: Int32Array;

  constructor(grid: Grid, settings: ClusterSettings, pileup: PileupSettings, command = 'cluster', options: EngineChainOptions = {}) {
    checkPileupSettings(grid, settings, pileup, command);
    this.grid = grid;
    this.settings = { ...settings };
    this.pileup = { ...pileup };
    this.rho = rhoEstimatorOf(pileup);
    this.cellCount = grid.etaBins * grid.phiBins;
    this.cellArea = cellAreaOf(grid);
    // the engine sees towers already past the threshold, and every final jet (ptMin comes last)
    this.clusterer = new WasmClusterer(grid, { ...settings, ptMin: 0, threshold: 0 }, options);
    this.ktClusterer = this.rho?.kind === 'kt'
      ? new WasmClusterer(grid, { p: 1, radius: this.rho.radius, ptMin: 0, threshold: 0, recombination: 'e' }, options)
      : null;
    this.softKillerPatches = pileup.softKiller ? makePatchLayout(grid, pileup.softKiller) : null;
    this.rhoPatches = this.rho?.kind === 'patches' ? makePatchLayout(grid, this.rho.patch) : null;

    const cells = this.cellCount;
    const patches = Math.max(this.softKillerPatches?.patchCount ?? 0, this.rhoPatches?.patchCount ?? 0);
    this.cellEt = new Float64Array(cells);
    this.cellReal = new Uint8Array(cells);
    this.inputIndex = new Int32Array(cells);
    this.inputEt = new Float64Array(cells);
    const ktSeparate = this.ktClusterer !== null && !pileup.areas;
    this.ktIndex = new Int32Array(ktSeparate ? cells : 0);
    this.ktEt = new Float64Array(ktSeparate ? cells : 0);
    this.patchValue = new Float64Array(patches);
    this.median = new Float64Array(Math.max(patches, cells));
    this.jetPx = new Float64Array(cells);
    this.jetPy = new Float64Array(cells);
    this.jetPz = new Float64Array(cells);
    this.jetEnergy = new Float64Array(cells);
    this.jetPt = new Float64Array(cells);
    this.jetMass = new Float64Array(cells);
    this.jetPtRaw = new Float64Array(cells);
    this.jetArea = new Float64Array(cells);
    this.jetGhosts = new Int32Array(cells);
    this.jetReal = new Int32Array(cells);
    this.jetIndex = new Int32Array(cells);
    this.jetRow = new Int32Array(cells);
    this.order = new Int32Array(cells);
  }

  /** One event's towers, any order, before the threshold; throws on a bad index like WasmClusterer. */
  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const jets = this.clusterEvent(towerIndex, towerEt, 0, towerIndex.length);
    if (jets === null) throw new Error(`engine: ${this.status === ENGINE_INDEX_OUTSIDE ? 'a tower index lies outside the grid' : 'a tower index appears twice'}`);
    return jets;
  }

  /** Towers from..to of the arrays as one event; null with `status` set for a bad index. */
  clusterEvent(towerIndex: Int32Array, towerEt: Float64Array, from: number, to: number): JetSet | null {
    const { cellEt, cellReal, pileup } = this;
    const cells = this.cellCount;

    // threshold (spec section 1), and the engine's index checks: outside first, then repeats
    this.status = ENGINE_OK;
    for (let k = from; k < to; k++) {
      if (towerIndex[k] >>> 0 >= cells) {
        this.status = ENGINE_INDEX_OUTSIDE;
        return null;
      }
    }
    cellReal.fill(0);
    const threshold = this.settings.threshold;
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
    }

    let etCut = 0;
    let killed = 0;
    if (this.softKillerPatches) {
      etCut = this.softKillerCut(this.softKillerPatches);
      for (let t = 0; t < cells; t++) {
        if (cellReal[t] === 1 && cellEt[t] < etCut) {
          cellReal[t] = 0;
          killed++;
        }
      }
    }

    // the clustering's input: real towers, and a ghost on every other cell with areas
    let inputCount = 0;
    for (let t = 0; t < cells; t++) {
      if (cellReal[t] === 0 && !pileup.areas) continue;
      this.inputIndex[inputCount] = t;
      this.inputEt[inputCount] = cellReal[t] === 1 ? cellEt[t] : pileup.ghostEt;
      inputCount++;
    }

    let rho = 0;
    if (this.rhoPatches) rho = this.patchRho(this.rhoPatches);
    else if (this.ktClusterer) rho = this.ktRho(this.ktClusterer, inputCount);

    this.inputStart[1] = inputCount;
    const batch = this.clusterer.clusterBatch(1, this.inputStart, this.inputIndex, this.inputEt, true);
    return this.finish(batch, rho, etCut, killed);
  }

  /** SoftKiller's cut: the median over patches of each patch's hardest real tower (spec section 10) */
  private softKillerCut(layout: PatchLayout): number {
    const maximum = this.patchValue;
    maximum.fill(0, 0, layout.patchCount);
    for (let t = 0; t < this.cellCount; t++) {
      if (this.cellReal[t] === 0) continue;
      const patch = layout.patchOfTower[t];
      if (this.cellEt[t] > maximum[patch]) maximum[patch] = this.cellEt[t];
    }
    return this.medianOf(maximum, layout.patchCount);
  }

  /** ρ from patches (spec section 9): sums in increasing flat index, density per patch, median */
  private patchRho(layout: PatchLayout): number {
    const value = this.patchValue;
    value.fill(0, 0, layout.patchCount);
    for (let t = 0; t < this.cellCount; t++) {
      if (this.cellReal[t] === 1) value[layout.patchOfTower[t]] += this.cellEt[t];
    }
    for (let patch = 0; patch < layout.patchCount; patch++) {
      value[patch] = value[patch] / (layout.cellsInPatch[patch] * this.cellArea);
    }
    return this.medianOf(value, layout.patchCount);
  }

  /** ρ from kt jets with ghosts (spec section 9); the input is the ghost-filled grid */
  private ktRho(kt: WasmClusterer, inputCount: number): number {
    let index = this.inputIndex;
    let et = this.inputEt;
    let count = inputCount;
    if (!this.pileup.areas) {
      index = this.ktIndex;
      et = this.ktEt;
      for (let t = 0; t < this.cellCount; t++) {
        index[t] = t;
        et[t] = this.cellReal[t] === 1 ? this.cellEt[t] : this.pileup.ghostEt;
      }
      count = this.cellCount;
    }
    this.inputStart[1] = count;
    const jets = kt.clusterBatch(1, this.inputStart, index, et, false);
    const radius = (this.rho as { radius: number }).radius;
    const low = this.grid.etaMin + radius;
    const high = this.grid.etaMax - radius;
    // jets come in decreasing pt, ties to the smaller index: the first two inside are the hardest
    let inside = 0;
    let kept = 0;
    for (let r = 0; r < jets.pt.length; r++) {
      const y = jets.rapidity[r];
      if (!(low < y && y < high)) continue;
      if (inside++ < 2) continue;
      this.median[kept++] = jets.pt[r] / (jets.towerCount[r] * this.cellArea);
    }
    return this.medianOf(this.median, kept);
  }

  /** the spec's median of values[0..n): sorted in place (part two, notation) */
  private medianOf(values: Float64Array, n: number): number {
    if (n === 0) return 0;
    if (values !== this.median) this.median.set(values.subarray(0, n));
    const sorted = this.median.subarray(0, n).sort();
    if (n % 2 === 1) return sorted[(n - 1) / 2];
    return 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
  }

  /** areas, subtraction, ptMin and order on the engine's final jets; packs the reported ones */
  private finish(batch: BatchJets, rho: number, etCut: number, killed: number): JetSet {
    const { cellReal, pileup } = this;
    let count = 0;
    let subtractedAway = 0;
    for (let r = 0; r < batch.pt.length; r++) {
      let real = 0;
      const start = batch.towerStart[r];
      for (let k = start; k < start + batch.towerCount[r]; k++) real += cellReal[batch.towers[k]];
      if (real === 0) continue; // a pure-ghost jet is never reported
      const area = pileup.areas ? batch.towerCount[r] * this.cellArea : 0;
      let px = batch.px[r];
      let py = batch.py[r];
      let pz = batch.pz[r];
      let energy = batch.energy[r];
      let pt = batch.pt[r];
      let mass = batch.mass[r];
      if (pileup.subtract) {
        const ptSub = pt - rho * area;
        if (ptSub <= 0) {
          subtractedAway++;
          continue;
        }
        const f = ptSub / pt;
        px = px * f;
        py = py * f;
        pz = pz * f;
        energy = energy * f;
        mass = Math.sqrt(Math.max(0, energy * energy - px * px - py * py - pz * pz));
        pt = ptSub;
      }
      if (!(pt >= this.settings.ptMin)) continue;
      this.jetPx[count] = px;
      this.jetPy[count] = py;
      this.jetPz[count] = pz;
      this.jetEnergy[count] = energy;
      this.jetPt[count] = pt;
      this.jetMass[count] = mass;
      this.jetPtRaw[count] = batch.pt[r];
      this.jetArea[count] = area;
      this.jetReal[count] = real;
      this.jetGhosts[count] = batch.towerCount[r] - real;
      this.jetIndex[count] = batch.jetIndex[r];
      this.jetRow[count] = r;
      count++;
    }

    // decreasing pt, ties to the smaller index; without subtraction the engine's order stands,
    // with it the order is nearly kept, so an insertion sort moves few jets
    const order = this.order;
    for (let m = 0; m < count; m++) {
      let at = m;
      while (at > 0 && this.comesBefore(m, order[at - 1])) {
        order[at] = order[at - 1];
        at--;
      }
      order[at] = m;
    }
    return this.pack(batch, count, { rho, etCut, killed, subtractedAway });
  }

  private comesBefore(a: number, b: number): boolean {
    if (this.jetPt[a] !== this.jetPt[b]) return this.jetPt[a] > this.jetPt[b];
    return this.jetIndex[a] < this.jetIndex[b];
  }

  private pack(batch: BatchJets, count: number, event: { rho: number; etCut: number; killed: number; subtractedAway: number }): JetSet {
    const jets = allocateJetSet(count);
    const ghosts = new Int32Array(count);
    const area = new Float64Array(count);
    const ptRaw = new Float64Array(count);
    let towerTotal = 0;
    for (let n = 0; n < count; n++) {
      const m = this.order[n];
      const r = this.jetRow[m];
      jets.px[n] = this.jetPx[m];
      jets.py[n] = this.jetPy[m];
      jets.pz[n] = this.jetPz[m];
      jets.energy[n] = this.jetEnergy[m];
      jets.pt[n] = this.jetPt[m];
      jets.rapidity[n] = batch.rapidity[r];
      jets.phi[n] = batch.phi[r];
      jets.mass[n] = this.jetMass[m];
      jets.towerCount[n] = this.jetReal[m];
      jets.towerStart[n] = towerTotal;
      towerTotal += this.jetReal[m];
      ghosts[n] = this.jetGhosts[m];
      area[n] = this.jetArea[m];
      ptRaw[n] = this.jetPtRaw[m];
    }
    jets.towers = new Int32Array(towerTotal);
    for (let n = 0; n < count; n++) {
      const r = this.jetRow[this.order[n]];
      let at = jets.towerStart[n];
      const start = batch.towerStart[r];
      for (let k = start; k < start + batch.towerCount[r]; k++) {
        if (this.cellReal[batch.towers[k]] === 1) jets.towers[at++] = batch.towers[k];
      }
    }
    jets.pileup = { ...event, ghosts, area, ptRaw };
    return jets;
  }
}
