// The engine's grooming (clustering-spec.md section 12), bit for bit the reference's
// (reference-groomer.ts): one WebAssembly instance per groomer, set up once with trimming's
// p = 1, R = RSUB or soft drop's p = 0, R = 1 without beams (assembly/grooming.ts). Per event
// the host writes every reported jet's real constituents into the instance's input as one
// "event" per jet, calls groomBatch() once, and copies the rows out:
//
//   jets.towers + each tower's et --copy--> inIndex/inEt/inStart (+ groomJetPt for trimming)
//     --groomBatch()--> groomPx .. groomDeltaR, outStatus --copy--> jets.trim / jets.softDrop
//
// Memory layout: assembly/layout.ts. Host scratch, reserved once: cellEt f64[C] (the et of each
// input tower by cell; only cells of this event's towers are ever read).

import { checkGrid, makeGridTables, type GridTables } from '../grid.js';
import { ENGINE_OK, REGION, describeStatus, loadEngineModule, startEngineInstance } from '../engine-module.js';
import { JET_DOUBLE_FIELDS } from '../jet-set.js';
import type { Grid, GroomedFourVectors, GroomingSettings, JetSet } from '../../types.js';
import type { JetGroomer } from './groomer.js';
import { allocateSoftDropJets, allocateTrimmedJets } from './rows.js';

/** grooming's region ids and modes (assembly/shared-constants.ts); a test checks them against a build */
export const GROOM_REGION = {
  jetPt: 25, px: 26, py: 27, pz: 28, energy: 29, pt: 30, rapidity: 31, phi: 32, mass: 33,
  towers: 34, subjets: 35, zg: 36, deltaRg: 37,
} as const;
export const GROOM_TRIM = 1;
export const GROOM_SOFT_DROP = 2;

/** the batch capacity of a grooming instance, in jets per call (bigger events take several calls) */
const JETS_PER_CALL = 4096;

interface GroomExports {
  memory: WebAssembly.Memory;
  setup(etaBins: number, phiBins: number, towerCapacity: number, eventCapacity: number): number;
  configureEngine(p: number, radius: number, ptMin: number, threshold: number, wta: number, etaMin: number, etaMax: number): number;
  region(id: number): number;
  configureGroomer(mode: number, cut: number, beta: number, jetRadius: number): void;
  groomBatch(count: number): void;
  groomRegion(id: number): number;
}

function copyRows(from: Float64Array | Int32Array, to: Float64Array | Int32Array, count: number, first: number): void {
  for (let n = 0; n < count; n++) to[first + n] = from[n];
}

/** One instance of the engine set up for one groomer, with views over its regions made once. */
class GroomingInstance {
  private readonly exports: GroomExports;
  private readonly inIndex: Int32Array;
  private readonly inEt: Float64Array;
  private readonly inStart: Int32Array;
  private readonly outStatus: Int32Array;
  private readonly jetPt: Float64Array;
  private readonly doubles: Float64Array[];
  private readonly towers: Int32Array;
  private readonly subjets: Int32Array;
  private readonly zg: Float64Array;
  private readonly deltaRg: Float64Array;

  constructor(tables: GridTables, mode: number, p: number, radius: number, cut: number, beta: number, jetRadius: number, module: WebAssembly.Module) {
    const { towerTotal } = tables;
    // one event's jets hold at most every tower once
    this.exports = startEngineInstance<GroomExports>(module, tables, towerTotal, JETS_PER_CALL, { p, radius, ptMin: 0, threshold: 0, wta: 0 }, 'grooming on ');
    const e = this.exports;
    e.configureGroomer(mode, cut, beta, jetRadius);
    // memory never grows after configureEngine(): views made now stay valid
    const buffer = e.memory.buffer;
    const f64 = (at: number, n: number) => new Float64Array(buffer, at, n);
    const i32 = (at: number, n: number) => new Int32Array(buffer, at, n);
    this.inIndex = i32(e.region(REGION.inIndex), towerTotal);
    this.inEt = f64(e.region(REGION.inEt), towerTotal);
    this.inStart = i32(e.region(REGION.inStart), JETS_PER_CALL + 1);
    this.outStatus = i32(e.region(REGION.outStatus), JETS_PER_CALL);
    this.jetPt = f64(e.groomRegion(GROOM_REGION.jetPt), JETS_PER_CALL);
    this.doubles = JET_DOUBLE_FIELDS.map((field) => f64(e.groomRegion(GROOM_REGION[field]), JETS_PER_CALL));
    this.towers = i32(e.groomRegion(GROOM_REGION.towers), JETS_PER_CALL);
    this.subjets = i32(e.groomRegion(GROOM_REGION.subjets), JETS_PER_CALL);
    this.zg = f64(e.groomRegion(GROOM_REGION.zg), JETS_PER_CALL);
    this.deltaRg = f64(e.groomRegion(GROOM_REGION.deltaRg), JETS_PER_CALL);
  }

  /** Grooms every jet of `jets` into `out` (and `subjets` or `zg`/`deltaRg` when given). */
  groom(jets: JetSet, cellEt: Float64Array, out: GroomedFourVectors, subjets: Int32Array | null, zg: Float64Array | null, deltaRg: Float64Array | null): void {
    for (let first = 0; first < jets.count; first += JETS_PER_CALL) {
      const count = Math.min(JETS_PER_CALL, jets.count - first);
      const base = jets.towerStart[first];
      let at = 0;
      for (let n = 0; n < count; n++) {
        const jet = first + n;
        this.inStart[n] = at;
        this.jetPt[n] = jets.pt[jet];
        const start = jets.towerStart[jet] - base;
        for (let k = start; k < start + jets.towerCount[jet]; k++) {
          const t = jets.towers[base + k];
          this.inIndex[at] = t;
          this.inEt[at] = cellEt[t];
          at++;
        }
      }
      this.inStart[count] = at;
      this.exports.groomBatch(count);
      for (let n = 0; n < count; n++) {
        if (this.outStatus[n] !== ENGINE_OK) throw new Error(`engine: grooming jet ${first + n}: ${describeStatus(this.outStatus[n])}`);
      }
      // plain loops: a subarray() per field costs more than copying a few rows
      for (let f = 0; f < JET_DOUBLE_FIELDS.length; f++) copyRows(this.doubles[f], out[JET_DOUBLE_FIELDS[f]], count, first);
      copyRows(this.towers, out.towerCount, count, first);
      if (subjets) copyRows(this.subjets, subjets, count, first);
      if (zg) copyRows(this.zg, zg, count, first);
      if (deltaRg) copyRows(this.deltaRg, deltaRg, count, first);
    }
  }
}

export class EngineGroomer implements JetGroomer {
  readonly grooming: GroomingSettings;
  private readonly trimmer: GroomingInstance | null;
  private readonly softDropper: GroomingInstance | null;
  private readonly cellEt: Float64Array;

  /** `jetRadius`: the main clustering's R (soft drop's dR / R) */
  constructor(grid: Grid, grooming: GroomingSettings, jetRadius: number, options: { module?: WebAssembly.Module; debug?: boolean } = {}) {
    checkGrid(grid);
    this.grooming = { ...grooming };
    const tables = makeGridTables(grid);
    const module = options.module ?? loadEngineModule(options.debug ?? false);
    const { trim, softDrop } = grooming;
    this.trimmer = trim ? new GroomingInstance(tables, GROOM_TRIM, 1, trim.subjetRadius, trim.ptFraction, 0, jetRadius, module) : null;
    this.softDropper = softDrop ? new GroomingInstance(tables, GROOM_SOFT_DROP, 0, 1, softDrop.zCut, softDrop.beta, jetRadius, module) : null;
    this.cellEt = new Float64Array(tables.towerTotal);
  }

  groom(jets: JetSet, towerIndex: Int32Array, towerEt: Float64Array): void {
    if (!this.trimmer && !this.softDropper) return;
    if (jets.count === 0) {
      if (this.trimmer) jets.trim = allocateTrimmedJets(0);
      if (this.softDropper) jets.softDrop = allocateSoftDropJets(0);
      return;
    }
    // every reported tower is one of the input's, with the et it came in with
    const cellEt = this.cellEt;
    for (let k = 0; k < towerIndex.length; k++) cellEt[towerIndex[k]] = towerEt[k];
    if (this.trimmer) {
      const trim = allocateTrimmedJets(jets.count);
      this.trimmer.groom(jets, cellEt, trim, trim.subjets, null, null);
      jets.trim = trim;
    }
    if (this.softDropper) {
      const softDrop = allocateSoftDropJets(jets.count);
      this.softDropper.groom(jets, cellEt, softDrop, null, softDrop.zg, softDrop.deltaRg);
      jets.softDrop = softDrop;
    }
  }
}
