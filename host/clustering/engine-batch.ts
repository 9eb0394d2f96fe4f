// The engine's memory seen from the host, and the jets of a batch copied out of it (engine.ts
// has the clusterer; the regions are laid out in assembly/layout.ts).

import { REGION, type EngineExports } from './engine-module.js';
import type { JetSet } from '../types.js';

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

/** Views of the module's input and output regions; remade when its memory buffer changes. */
export interface EngineViews {
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

/** Views of a batch of `towers` towers and `events` events over the module's regions. */
export function makeEngineViews(exports: EngineExports, towers: number, events: number): EngineViews {
  const { memory, region } = exports;
  const buffer = memory.buffer as ArrayBuffer;
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

export function allocateBatchJets(eventCount: number, total: number, withTowers: boolean): BatchJets {
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
