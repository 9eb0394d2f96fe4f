// The engine chain's last steps (clustering-spec.md sections 8-9, then 6's ptMin and order): from
// the WebAssembly engine's final jets to the reported ones, bit for bit as chain.ts does them.
//
// Layout (J = grid cells: no event has more final jets than cells):
//   px py pz energy pt mass ptRaw area f64[J]   ghosts real jetIndex row i32[J]
//     the jets kept so far, in the engine's output order; row = the engine's output rank
//   order i32[J]   their reported order

import type { EngineJetRows } from './ghost-grid-engine.js';
import { allocateJetSet } from '../jet-set.js';
import type { JetSet, PileupValues } from '../../types.js';

/** the engine's final jets of one event: a BatchJets of one event, or a ghost grid's rows */
type EngineRows = Omit<EngineJetRows, 'count'>;

export class ReportedJets {
  private readonly px: Float64Array;
  private readonly py: Float64Array;
  private readonly pz: Float64Array;
  private readonly energy: Float64Array;
  private readonly pt: Float64Array;
  private readonly mass: Float64Array;
  private readonly ptRaw: Float64Array;
  private readonly area: Float64Array;
  private readonly ghosts: Int32Array;
  private readonly real: Int32Array;
  private readonly jetIndex: Int32Array;
  private readonly row: Int32Array;
  private readonly order: Int32Array;

  constructor(
    cellCount: number,
    private readonly cellArea: number,
    private readonly areas: boolean,
    private readonly subtract: boolean,
    private readonly ptMin: number,
  ) {
    this.px = new Float64Array(cellCount);
    this.py = new Float64Array(cellCount);
    this.pz = new Float64Array(cellCount);
    this.energy = new Float64Array(cellCount);
    this.pt = new Float64Array(cellCount);
    this.mass = new Float64Array(cellCount);
    this.ptRaw = new Float64Array(cellCount);
    this.area = new Float64Array(cellCount);
    this.ghosts = new Int32Array(cellCount);
    this.real = new Int32Array(cellCount);
    this.jetIndex = new Int32Array(cellCount);
    this.row = new Int32Array(cellCount);
    this.order = new Int32Array(cellCount);
  }

  /**
   * The reported jets of one event: pure-ghost jets left out, areas, ρ · area subtracted when
   * asked, ptMin, then decreasing pt with ties to the smaller index. `cellReal[t]` is 1 for a
   * cell holding a real tower; rho, etCut and killed are the event's (no object spread per
   * event: V8 builds those on a slow path, measured at about a third of this step).
   */
  report(batch: EngineRows, jetCount: number, cellReal: Uint8Array, rho: number, etCut: number, killed: number): JetSet {
    const { towers, towerStart, towerCount } = batch;
    let count = 0;
    let subtractedAway = 0;
    for (let r = 0; r < jetCount; r++) {
      let real = 0;
      const start = towerStart[r];
      const end = start + towerCount[r];
      for (let k = start; k < end; k++) real += cellReal[towers[k]];
      if (real === 0) continue; // a pure-ghost jet is never reported
      const area = this.areas ? batch.towerCount[r] * this.cellArea : 0;
      let px = batch.px[r];
      let py = batch.py[r];
      let pz = batch.pz[r];
      let energy = batch.energy[r];
      let pt = batch.pt[r];
      let mass = batch.mass[r];
      if (this.subtract) {
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
      if (!(pt >= this.ptMin)) continue;
      this.px[count] = px;
      this.py[count] = py;
      this.pz[count] = pz;
      this.energy[count] = energy;
      this.pt[count] = pt;
      this.mass[count] = mass;
      this.ptRaw[count] = batch.pt[r];
      this.area[count] = area;
      this.real[count] = real;
      this.ghosts[count] = batch.towerCount[r] - real;
      this.jetIndex[count] = batch.jetIndex[r];
      this.row[count] = r;
      count++;
    }

    // without subtraction the engine's order stands; with it the order is nearly kept, so an
    // insertion sort moves few jets
    const order = this.order;
    for (let m = 0; m < count; m++) {
      let at = m;
      while (at > 0 && this.comesBefore(m, order[at - 1])) {
        order[at] = order[at - 1];
        at--;
      }
      order[at] = m;
    }
    return this.pack(batch, cellReal, count, rho, etCut, killed, subtractedAway);
  }

  /** decreasing pt, ties to the smaller index (spec sections 6 and 9) */
  private comesBefore(a: number, b: number): boolean {
    if (this.pt[a] !== this.pt[b]) return this.pt[a] > this.pt[b];
    return this.jetIndex[a] < this.jetIndex[b];
  }

  private pack(
    batch: EngineRows, cellReal: Uint8Array, count: number, rho: number, etCut: number, killed: number, subtractedAway: number,
  ): JetSet {
    const jets = allocateJetSet(count);
    const ghosts = new Int32Array(count);
    const area = new Float64Array(count);
    const ptRaw = new Float64Array(count);
    let towerTotal = 0;
    for (let n = 0; n < count; n++) {
      const m = this.order[n];
      const r = this.row[m];
      jets.px[n] = this.px[m];
      jets.py[n] = this.py[m];
      jets.pz[n] = this.pz[m];
      jets.energy[n] = this.energy[m];
      jets.pt[n] = this.pt[m];
      jets.rapidity[n] = batch.rapidity[r];
      jets.phi[n] = batch.phi[r];
      jets.mass[n] = this.mass[m];
      jets.towerCount[n] = this.real[m];
      jets.towerStart[n] = towerTotal;
      towerTotal += this.real[m];
      ghosts[n] = this.ghosts[m];
      area[n] = this.area[m];
      ptRaw[n] = this.ptRaw[m];
    }
    // the real constituents only, still in increasing flat index
    jets.towers = new Int32Array(towerTotal);
    const { towers, towerStart, towerCount } = batch;
    const realTowers = jets.towers;
    for (let n = 0; n < count; n++) {
      const r = this.row[this.order[n]];
      let at = jets.towerStart[n];
      const start = towerStart[r];
      const end = start + towerCount[r];
      for (let k = start; k < end; k++) {
        const t = towers[k];
        if (cellReal[t] === 1) realTowers[at++] = t;
      }
    }
    const pileup: PileupValues = { rho, etCut, killed, subtractedAway, ghosts, area, ptRaw };
    jets.pileup = pileup;
    return jets;
  }
}
