// Host side of the WebAssembly engine (assembly/, memory layout in assembly/layout.ts): one
// instance per clusterer, its memory reserved once for the grid and the batch capacity. The host
// writes towers straight into the module's input regions and copies jets out of its output
// regions; nothing crosses the boundary per tower or per jet.
//
//   towers (Int32Array, Float64Array) --copy--> inIndex/inEt/inStart --clusterBatch()-->
//   outJetStart/outNs/outClustered/outStatus + jet fields + outTowers --copy--> BatchJets

import { readFileSync, existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { checkGrid, makeGridTables, type GridTables } from './grid.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';

// Copies of the engine's numbers (assembly/shared-constants.ts); tests/engine-constants.test.ts
// reads the engine's from an instance and checks that these agree.

/** per-event status of a batch */
export const ENGINE_OK = 0;
export const ENGINE_INDEX_OUTSIDE = -1;
export const ENGINE_INDEX_REPEATED = -2;

/** towers per call at least (a call may also hold fewer, bigger events) */
const BATCH_TOWERS_MIN = 1 << 16;
const BATCH_EVENTS = 4096;

/** region ids of assembly/index.ts region() */
export const REGION = {
  etaCentre: 0, sinhEta: 1, coshEta: 2, phiCentre: 3, cosPhi: 4, sinPhi: 5,
  inIndex: 6, inEt: 7, inStart: 8,
  outJetStart: 9, outNs: 10, outClustered: 11, outStatus: 12,
  outPx: 13, outPy: 14, outPz: 15, outE: 16, outPt: 17, outY: 18, outPhi: 19, outMass: 20,
  outTowerCount: 21, outTowerStart: 22, outTowers: 23, outJetIndex: 24,
} as const;

interface EngineExports {
  memory: WebAssembly.Memory;
  setup(etaBins: number, phiBins: number, towerCapacity: number, eventCapacity: number): number;
  configureEngine(p: number, radius: number, ptMin: number, threshold: number, wta: number, etaMin: number, etaMax: number): number;
  region(id: number): number;
  clusterBatch(eventCount: number, withTowers: number): number;
  neighbourTable(): number;
}

/**
 * The jets of a batch of events, in flat arrays: event e's jets are jetStart[e]..jetStart[e+1].
 * The per-jet arrays are JetSet's; towerStart points into the whole batch's towers (empty when
 * clustered without them).
 */
export interface BatchJets extends Omit<JetSet, 'count'> {
  eventCount: number;
  jetStart: Int32Array;
  /** clustering time of each event inside the engine (threshold to written jets), ns */
  clusterNs: Float64Array;
  /** towers of each event that entered clustering (above threshold and >= 1e-150) */
  clustered: Int32Array;
  /** ENGINE_OK, or ENGINE_INDEX_OUTSIDE / ENGINE_INDEX_REPEATED for an invalid event (no jets) */
  status: Int32Array;
  /** each jet's index in the sequence (spec section 4): ties in a later reordering go by it */
  jetIndex: Int32Array;
}

/** The package root: the directory above this file holding asconfig.json (host/clustering/ or dist/host/clustering/). */
function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let up = 0; up < 4; up++) {
    if (existsSync(join(dir, 'asconfig.json'))) return dir;
    dir = dirname(dir);
  }
  throw new Error(`engine: no asconfig.json above ${fileURLToPath(import.meta.url)}; run npm run build`);
}

export function engineWasmPath(debug = false): string {
  return join(packageRoot(), 'build', debug ? 'jetlag.debug.wasm' : 'jetlag.wasm');
}

const compiled = new Map<boolean, WebAssembly.Module>();

/** The compiled module, once per thread (release or debug build). */
export function loadEngineModule(debug = false): WebAssembly.Module {
  let module = compiled.get(debug);
  if (!module) {
    const path = engineWasmPath(debug);
    if (!existsSync(path)) throw new Error(`engine: ${path} is missing; run npm run build`);
    module = new WebAssembly.Module(readFileSync(path));
    compiled.set(debug, module);
  }
  return module;
}

/** The host functions a build of the engine imports: its clock, its assertion trap, Math. */
export function engineImports(module: WebAssembly.Module): WebAssembly.Imports {
  const env: Record<string, WebAssembly.ImportValue> = {};
  for (const entry of WebAssembly.Module.imports(module)) {
    if (entry.name === 'clock.nowNs') env[entry.name] = () => performance.now() * 1e6;
    else if (entry.name === 'abort') {
      env[entry.name] = (_message: number, _file: number, line: number, column: number) => {
        throw new Error(`engine: assertion failed at line ${line}:${column} (instance is no longer usable)`);
      };
    } else if (entry.name.startsWith('Math.')) {
      const fn = (Math as unknown as Record<string, unknown>)[entry.name.slice(5)];
      if (typeof fn !== 'function') throw new Error(`engine: unknown import ${entry.name}`);
      env[entry.name] = fn as WebAssembly.ImportValue;
    } else throw new Error(`engine: unknown import ${entry.module}.${entry.name}`);
  }
  return { env };
}

/**
 * Copies the grid's centres and the host's cos/sin/sinh/cosh tables into the module's memory,
 * so tower four-vectors are built from exactly the doubles the reference uses (spec section 2).
 */
export function writeGridTables(memory: WebAssembly.Memory, region: (id: number) => number, tables: GridTables): void {
  const { etaBins, phiBins } = tables.grid;
  const put = (id: number, values: Float64Array, length: number) => {
    new Float64Array(memory.buffer, region(id), length).set(values);
  };
  put(REGION.etaCentre, tables.etaCentre, etaBins);
  put(REGION.sinhEta, tables.sinhEta, etaBins);
  put(REGION.coshEta, tables.coshEta, etaBins);
  put(REGION.phiCentre, tables.phiCentre, phiBins);
  put(REGION.cosPhi, tables.cosPhi, phiBins);
  put(REGION.sinPhi, tables.sinPhi, phiBins);
}

/** Throws a one-line error naming the setting when the engine cannot use it. */
export function checkEngineSettings(settings: ClusterSettings): void {
  const { p, radius, ptMin, threshold, recombination } = settings;
  if (!Number.isFinite(p)) throw new Error(`settings.p must be a finite number, got ${p}`);
  if (!(Number.isFinite(radius) && radius > 0 && Number.isFinite(1 / (radius * radius)) && radius * radius > 0)) {
    throw new Error(`settings.radius must be a positive finite number whose square is a normal double, got ${radius}`);
  }
  if (Number.isNaN(ptMin)) throw new Error(`settings.ptMin must be a number, got ${ptMin}`);
  if (!(threshold >= 0)) throw new Error(`settings.threshold must be a number >= 0, got ${threshold}`);
  if (recombination !== 'e' && recombination !== 'wta') {
    throw new Error(`settings.recombination must be 'e' or 'wta', got ${String(recombination)}`);
  }
}

interface Views {
  buffer: ArrayBuffer;
  inIndex: Int32Array;
  inEt: Float64Array;
  inStart: Int32Array;
  outJetStart: Int32Array;
  outNs: Float64Array;
  outClustered: Int32Array;
  outStatus: Int32Array;
  doubles: Float64Array[]; // px py pz energy pt rapidity phi mass
  outTowerCount: Int32Array;
  outTowerStart: Int32Array;
  outTowers: Int32Array;
  outJetIndex: Int32Array;
}

const DOUBLE_FIELDS = ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const;

export class WasmClusterer implements Clusterer {
  readonly name = 'wasm';
  readonly settings: ClusterSettings;
  readonly tables: GridTables;
  /** towers one call can hold; bigger batches are cut into calls */
  readonly towerCapacity: number;
  readonly eventCapacity: number;
  withTowers = true;
  private readonly exports: EngineExports;
  private views: Views;
  /** clusterBatchReusing's result arrays, made on its first call: one event of up to the grid's towers */
  private reusable: BatchJets | null = null;

  constructor(grid: Grid, settings: ClusterSettings, options: { module?: WebAssembly.Module; debug?: boolean } = {}) {
    checkGrid(grid);
    checkEngineSettings(settings);
    this.settings = { ...settings };
    this.tables = makeGridTables(grid);
    const module = options.module ?? loadEngineModule(options.debug ?? false);
    const instance = new WebAssembly.Instance(module, engineImports(module));
    this.exports = instance.exports as unknown as EngineExports;
    this.towerCapacity = Math.max(this.tables.towerTotal, BATCH_TOWERS_MIN);
    this.eventCapacity = BATCH_EVENTS;
    if (!this.exports.setup(grid.etaBins, grid.phiBins, this.towerCapacity, this.eventCapacity)) {
      throw new Error(`engine: cannot reserve memory for a grid of ${this.tables.towerTotal} towers`);
    }
    writeGridTables(this.exports.memory, (id) => this.exports.region(id), this.tables);
    const s = this.settings;
    if (!this.exports.configureEngine(s.p, s.radius, s.ptMin, s.threshold, s.recombination === 'wta' ? 1 : 0, grid.etaMin, grid.etaMax)) {
      throw new Error(`engine: cannot reserve memory for the search rows of R = ${s.radius} on a grid of ${this.tables.towerTotal} towers`);
    }
    this.views = this.makeViews();
  }

  private makeViews(): Views {
    const { memory, region } = this.exports;
    const buffer = memory.buffer as ArrayBuffer;
    const towers = this.towerCapacity;
    const events = this.eventCapacity;
    const f64 = (id: number, n: number) => new Float64Array(buffer, region(id), n);
    const i32 = (id: number, n: number) => new Int32Array(buffer, region(id), n);
    return {
      buffer,
      inIndex: i32(REGION.inIndex, towers),
      inEt: f64(REGION.inEt, towers),
      inStart: i32(REGION.inStart, events + 1),
      outJetStart: i32(REGION.outJetStart, events + 1),
      outNs: f64(REGION.outNs, events),
      outClustered: i32(REGION.outClustered, events),
      outStatus: i32(REGION.outStatus, events),
      doubles: [REGION.outPx, REGION.outPy, REGION.outPz, REGION.outE, REGION.outPt, REGION.outY, REGION.outPhi, REGION.outMass]
        .map((id) => f64(id, towers)),
      outTowerCount: i32(REGION.outTowerCount, towers),
      outTowerStart: i32(REGION.outTowerStart, towers),
      outTowers: i32(REGION.outTowers, towers),
      outJetIndex: i32(REGION.outJetIndex, towers),
    };
  }

  /** Size of the module's linear memory; it is reserved once and must not grow per event. */
  memoryBytes(): number {
    return this.exports.memory.buffer.byteLength;
  }

  private currentViews(): Views {
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
   * clusterBatch for a caller that is done with the jets before its next call (the pileup
   * chain copies them out): the result's arrays are this clusterer's own, reserved once and
   * overwritten by the next call, so a 3200-tower event allocates no result arrays (they are
   * ~260 KB a call otherwise). Other batches (more than one event, or more towers than the grid
   * has cells) get arrays of their own.
   */
  clusterBatchReusing(eventCount: number, towerStart: Int32Array, towerIndex: Int32Array, towerEt: Float64Array, withTowers: boolean): BatchJets {
    const total = towerStart[eventCount] - towerStart[0];
    if (eventCount !== 1 || total > this.tables.towerTotal) return this.clusterBatch(eventCount, towerStart, towerIndex, towerEt, withTowers);
    this.reusable ??= allocateBatchJets(1, this.tables.towerTotal, true);
    const r = this.reusable;
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
      for (let f = 0; f < DOUBLE_FIELDS.length; f++) {
        result[DOUBLE_FIELDS[f]].set(out.doubles[f].subarray(0, jets), jetsDone);
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
    for (const field of DOUBLE_FIELDS) result[field] = result[field].subarray(0, jetsDone);
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

function allocateBatchJets(eventCount: number, total: number, withTowers: boolean): BatchJets {
  return {
    eventCount,
    jetStart: new Int32Array(eventCount + 1),
    clusterNs: new Float64Array(eventCount),
    clustered: new Int32Array(eventCount),
    status: new Int32Array(eventCount),
    px: new Float64Array(total), py: new Float64Array(total), pz: new Float64Array(total),
    energy: new Float64Array(total), pt: new Float64Array(total), rapidity: new Float64Array(total),
    phi: new Float64Array(total), mass: new Float64Array(total),
    towerCount: new Int32Array(total), towerStart: new Int32Array(total),
    towers: new Int32Array(withTowers ? total : 0),
    jetIndex: new Int32Array(total),
  };
}

export function describeStatus(status: number): string {
  if (status === ENGINE_INDEX_OUTSIDE) return 'a tower index lies outside the grid';
  if (status === ENGINE_INDEX_REPEATED) return 'a tower index appears twice';
  return status === ENGINE_OK ? 'ok' : `unknown status ${status}`;
}

/** Event e of a batch as a JetSet of its own (views, with towerStart counted from its first tower). */
export function batchEventJets(batch: BatchJets, event: number): JetSet {
  const from = batch.jetStart[event];
  const to = batch.jetStart[event + 1];
  const count = to - from;
  const towerStart = new Int32Array(count);
  const firstTower = count > 0 ? batch.towerStart[from] : 0;
  let towerTotal = 0;
  for (let k = 0; k < count; k++) {
    towerStart[k] = batch.towerStart[from + k] - firstTower;
    towerTotal += batch.towerCount[from + k];
  }
  const hasTowers = batch.towers.length > 0 || towerTotal === 0;
  return {
    count,
    px: batch.px.subarray(from, to),
    py: batch.py.subarray(from, to),
    pz: batch.pz.subarray(from, to),
    energy: batch.energy.subarray(from, to),
    pt: batch.pt.subarray(from, to),
    rapidity: batch.rapidity.subarray(from, to),
    phi: batch.phi.subarray(from, to),
    mass: batch.mass.subarray(from, to),
    towerCount: batch.towerCount.subarray(from, to),
    towerStart,
    towers: hasTowers ? batch.towers.subarray(firstTower, firstTower + towerTotal) : new Int32Array(0),
  };
}
