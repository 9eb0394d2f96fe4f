// Host side of the WebAssembly engine (assembly/, memory layout in assembly/layout.ts): one
// instance per clusterer, its memory reserved once for the grid and the batch capacity. The host
// writes towers straight into the module's input regions and copies jets out of its output
// regions; nothing crosses the boundary per tower or per jet.
//
//   towers (Int32Array, Float64Array) --copy--> inIndex/inEt/inStart --clusterBatch()-->
//   outJetStart/outNs/outClustered/outStatus + jet fields + outTowers --copy--> BatchJets

import { checkGrid, makeGridTables, type GridTables } from './grid.js';
import { allocateBatchJets, batchEventJets, makeEngineViews, type BatchJets, type EngineViews } from './engine-batch.js';
import { JET_DOUBLE_FIELDS } from './jet-set.js';
import { checkEngineSettings, describeStatus, ENGINE_OK, loadEngineModule, startEngineInstance, type EngineExports } from './engine-module.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';

/** towers per call at least (a call may also hold fewer, bigger events) */
const BATCH_TOWERS_MIN = 1 << 16;
const BATCH_EVENTS = 4096;

export class WasmClusterer implements Clusterer {
  readonly name = 'wasm';
  readonly settings: ClusterSettings;
  readonly tables: GridTables;
  /** towers one call can hold; bigger batches are cut into calls */
  readonly towerCapacity: number;
  readonly eventCapacity: number;
  withTowers = true;
  private readonly exports: EngineExports;
  private views: EngineViews;
  /** clusterBatchReusing's result arrays, made on its first call: one event of up to the grid's towers */
  private reusable: BatchJets | null = null;

  constructor(grid: Grid, settings: ClusterSettings, options: { module?: WebAssembly.Module; debug?: boolean } = {}) {
    checkGrid(grid);
    checkEngineSettings(settings);
    this.settings = { ...settings };
    this.tables = makeGridTables(grid);
    const module = options.module ?? loadEngineModule(options.debug ?? false);
    this.towerCapacity = Math.max(this.tables.towerTotal, BATCH_TOWERS_MIN);
    this.eventCapacity = BATCH_EVENTS;
    const s = this.settings;
    this.exports = startEngineInstance<EngineExports>(module, this.tables, this.towerCapacity, this.eventCapacity,
      { p: s.p, radius: s.radius, ptMin: s.ptMin, threshold: s.threshold, wta: s.recombination === 'wta' ? 1 : 0 });
    this.views = this.makeViews();
  }

  private makeViews(): EngineViews {
    return makeEngineViews(this.exports, this.towerCapacity, this.eventCapacity);
  }

  /** Size of the module's linear memory; it is reserved once and must not grow per event. */
  memoryBytes(): number {
    return this.exports.memory.buffer.byteLength;
  }

  private currentViews(): EngineViews {
    if (this.views.buffer !== this.exports.memory.buffer) this.views = this.makeViews();
    return this.views;
  }

  /** One valid event's towers, any order, before the threshold. */
  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const towerStart = new Int32Array([0, towerIndex.length]);
    const batch = this.clusterBatch(1, towerStart, towerIndex, towerEt, this.withTowers);
    if (batch.status[0] !== ENGINE_OK) throw new Error(`engine: ${describeStatus(batch.status[0])}`);
    return batchEventJets(batch, 0);
  }

  /**
   * Events e = 0..eventCount-1 with towers towerStart[e]..towerStart[e+1] of towerIndex/towerEt
   * (each valid, any order, before the threshold). Jets come back in flat arrays with per-event
   * ranges, per-event clustering time and status.
   */
  clusterBatch(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets {
    const total = towerStart[eventCount] - towerStart[0];
    return this.clusterBatchInto(allocateBatchJets(eventCount, total, withTowers), eventCount, towerStart, towerIndex, towerEt, withTowers);
  }

  /**
   * clusterBatch for a caller that is done with the jets before its next call (a pool worker
   * checks and encodes a batch before it takes the next; the pileup chain copies them out): the
   * result's arrays are this clusterer's own, reserved once, grown when a batch needs more, and
   * overwritten by the next call. Fresh arrays for a 32-event batch of pileup-200 events are
   * about 2.6 MB (a slot per tower in each of 12 arrays), and a worker spent about 2 ms a batch
   * allocating them (its profile, 2 workers on the bench machine).
   */
  clusterBatchReusing(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets {
    const total = towerStart[eventCount] - towerStart[0];
    const held = this.reusable;
    const r = held !== null && held.jetStart.length > eventCount && held.px.length >= total
      ? held
      : (this.reusable = allocateBatchJets(Math.max(eventCount, held?.eventCount ?? 1), Math.max(total, this.tables.towerTotal, held?.px.length ?? 0), true));
    const into: BatchJets = {
      eventCount,
      jetStart: r.jetStart, clusterNs: r.clusterNs, clustered: r.clustered, status: r.status,
      px: r.px, py: r.py, pz: r.pz, energy: r.energy, pt: r.pt, rapidity: r.rapidity, phi: r.phi, mass: r.mass,
      towerCount: r.towerCount, towerStart: r.towerStart, towers: withTowers ? r.towers : r.towers.subarray(0, 0), jetIndex: r.jetIndex,
    };
    return this.clusterBatchInto(into, eventCount, towerStart, towerIndex, towerEt, withTowers);
  }

  /** the work of clusterBatch, into `result`'s arrays (at least eventCount + 1 and the batch's towers long) */
  private clusterBatchInto(
    result: BatchJets, eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean,
  ): BatchJets {
    result.jetStart[0] = 0;
    let jetsDone = 0;
    let towersDone = 0;
    let first = 0;
    while (first < eventCount) {
      // as many whole events as fit one call
      let last = first;
      const base = towerStart[first];
      while (last < eventCount && last - first < this.eventCapacity && towerStart[last + 1] - base <= this.towerCapacity) last++;
      if (last === first) {
        throw new Error(`engine: event ${first} of the batch has ${towerStart[first + 1] - base} towers, more than the ${this.towerCapacity} one call holds`);
      }
      const v = this.currentViews();
      const count = last - first;
      const end = towerStart[last];
      v.inIndex.set(towerIndex.subarray(base, end));
      v.inEt.set(towerEt.subarray(base, end));
      for (let e = 0; e <= count; e++) v.inStart[e] = towerStart[first + e] - base;
      const jets = this.exports.clusterBatch(count, withTowers ? 1 : 0);
      const out = this.currentViews();
      for (let e = 0; e < count; e++) {
        result.jetStart[first + e + 1] = jetsDone + out.outJetStart[e + 1];
        result.clusterNs[first + e] = out.outNs[e];
        result.clustered[first + e] = out.outClustered[e];
        result.status[first + e] = out.outStatus[e];
      }
      for (let f = 0; f < JET_DOUBLE_FIELDS.length; f++) {
        result[JET_DOUBLE_FIELDS[f]].set(out.doubles[f].subarray(0, jets), jetsDone);
      }
      result.towerCount.set(out.outTowerCount.subarray(0, jets), jetsDone);
      result.jetIndex.set(out.outJetIndex.subarray(0, jets), jetsDone);
      let towersWritten = 0;
      for (let k = 0; k < jets; k++) {
        result.towerStart[jetsDone + k] = towersDone + out.outTowerStart[k];
        towersWritten += out.outTowerCount[k];
      }
      if (withTowers) result.towers.set(out.outTowers.subarray(0, towersWritten), towersDone);
      jetsDone += jets;
      if (withTowers) towersDone += towersWritten;
      first = last;
    }
    result.jetStart = result.jetStart.subarray(0, eventCount + 1);
    result.clusterNs = result.clusterNs.subarray(0, eventCount);
    result.clustered = result.clustered.subarray(0, eventCount);
    result.status = result.status.subarray(0, eventCount);
    for (const field of JET_DOUBLE_FIELDS) result[field] = result[field].subarray(0, jetsDone);
    result.towerCount = result.towerCount.subarray(0, jetsDone);
    result.towerStart = result.towerStart.subarray(0, jetsDone);
    result.jetIndex = result.jetIndex.subarray(0, jetsDone);
    result.towers = result.towers.subarray(0, towersDone);
    return result;
  }

  /**
   * The engine's first nearest-neighbour table for one valid event: entry t is the jet index of
   * selected tower t's neighbour under the spec's key (section 4), -1 when none lies within the
   * reach R*R*(1 + 1e-9).
   */
  firstNeighbourTable(towerIndex: Int32Array, towerEt: Float64Array): Int32Array {
    if (towerIndex.length > this.towerCapacity) throw new Error(`engine: event has more than ${this.towerCapacity} towers`);
    const v = this.currentViews();
    v.inIndex.set(towerIndex);
    v.inEt.set(towerEt);
    v.inStart[0] = 0;
    v.inStart[1] = towerIndex.length;
    const n = this.exports.neighbourTable();
    if (n < 0) throw new Error(`engine: ${describeStatus(n)}`);
    return this.currentViews().outTowers.slice(0, n);
  }
}
