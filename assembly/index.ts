// Entry points of the engine. The host calls setup() once, writes the grid tables into their
// regions, calls configureEngine() once, then per batch writes towers into the input regions,
// calls clusterBatch() and reads jets from the output regions (region() gives the pointers;
// the numbering is mirrored in host/clustering/engine.ts). Memory layout: layout.ts.

import { reserve, getI32, setI32, setF64, inStart, outJetStart, outNs, outClustered, outStatus,
  outTowers, etaCentre, sinhEta, coshEta, phiCentre, cosPhi, sinPhi, inIndex, inEt, outPx, outPy,
  outPz, outE, outPt, outY, outPhi, outMass, outTowerCount, outTowerStart, outJetIndex, etaBins, phiBins } from './layout';
import { configure } from './settings';
import { initCells, initPadding } from './cells';
import { initTree } from './tournament';
import { buildOffsets } from './offsets';
import { initInput, selectTowers } from './input';
import { clusterTowers, firstNeighbours, finalCount, jetCount } from './sequence';
import { writeJets, towersWritten } from './output';
import { STATUS_OK, REGION_ETA_CENTRE, REGION_SINH_ETA, REGION_COSH_ETA, REGION_PHI_CENTRE,
  REGION_COS_PHI, REGION_SIN_PHI, REGION_IN_INDEX, REGION_IN_ET, REGION_IN_START, REGION_OUT_JET_START,
  REGION_OUT_NS, REGION_OUT_CLUSTERED, REGION_OUT_STATUS, REGION_OUT_PX, REGION_OUT_PY, REGION_OUT_PZ,
  REGION_OUT_E, REGION_OUT_PT, REGION_OUT_Y, REGION_OUT_PHI, REGION_OUT_MASS, REGION_OUT_TOWER_COUNT,
  REGION_OUT_TOWER_START, REGION_OUT_TOWERS, REGION_OUT_JET_INDEX } from './shared-constants';

// the numbers the host mirrors, as exported globals for tests/engine-constants.test.ts
export * from './shared-constants';
// grooming of large-R jets by an instance set up for it (grooming.ts)
export { configureGroomer, groomBatch, groomRegion } from './grooming';
// the pileup chain's ghost-filled grid, made in the engine (ghost-grid.ts)
export { clusterGhostGrid } from './ghost-grid';

// @ts-ignore: decorator
@external("env", "clock.nowNs")
declare function nowNs(): f64;

/** Reserves memory for the grid and the batch capacity; returns 0 when memory cannot grow. Once. */
export function setup(etaCount: i32, phiCount: i32, towerCapacity: i32, eventCapacity: i32): i32 {
  return reserve(etaCount, phiCount, towerCapacity, eventCapacity) ? 1 : 0;
}

/** Fixes the algorithm; once, after setup(). wta: 0 E-scheme, 1 winner-take-all. Returns 0 when
 * memory cannot grow for the padded rows the search reach needs. */
export function configureEngine(p: f64, radius: f64, ptMin: f64, threshold: f64, wta: i32, etaLow: f64, etaHigh: f64): i32 {
  configure(p, radius, ptMin, threshold, wta, etaLow, etaHigh, etaBins, phiBins);
  initCells();
  initTree();
  initInput();
  if (!buildOffsets()) return 0;
  initPadding();
  return 1;
}

/** Pointer of a region, by its id (shared-constants.ts, mirrored in host/clustering/engine.ts). */
export function region(id: i32): usize {
  switch (id) {
    case REGION_ETA_CENTRE: return etaCentre;
    case REGION_SINH_ETA: return sinhEta;
    case REGION_COSH_ETA: return coshEta;
    case REGION_PHI_CENTRE: return phiCentre;
    case REGION_COS_PHI: return cosPhi;
    case REGION_SIN_PHI: return sinPhi;
    case REGION_IN_INDEX: return inIndex;
    case REGION_IN_ET: return inEt;
    case REGION_IN_START: return inStart;
    case REGION_OUT_JET_START: return outJetStart;
    case REGION_OUT_NS: return outNs;
    case REGION_OUT_CLUSTERED: return outClustered;
    case REGION_OUT_STATUS: return outStatus;
    case REGION_OUT_PX: return outPx;
    case REGION_OUT_PY: return outPy;
    case REGION_OUT_PZ: return outPz;
    case REGION_OUT_E: return outE;
    case REGION_OUT_PT: return outPt;
    case REGION_OUT_Y: return outY;
    case REGION_OUT_PHI: return outPhi;
    case REGION_OUT_MASS: return outMass;
    case REGION_OUT_TOWER_COUNT: return outTowerCount;
    case REGION_OUT_TOWER_START: return outTowerStart;
    case REGION_OUT_TOWERS: return outTowers;
    case REGION_OUT_JET_INDEX: return outJetIndex;
  }
  return 0;
}

/**
 * Clusters events 0..eventCount-1 of the input (event e's towers are inStart[e]..inStart[e+1]);
 * returns the number of jets written. Per event: outJetStart (eventCount + 1 offsets),
 * outNs (clustering time, ns), outClustered (towers that entered), outStatus (STATUS_OK, or
 * STATUS_INDEX_OUTSIDE / STATUS_INDEX_REPEATED: such an event gets no jets).
 * Called once per batch.
 */
export function clusterBatch(eventCount: i32, withTowers: i32): i32 {
  let jetBase = 0;
  let towerBase = 0;
  setI32(outJetStart, 0, 0);
  for (let e = 0; e < eventCount; e++) {
    const began = nowNs();
    const n = selectTowers(getI32(inStart, e), getI32(inStart, e + 1));
    if (n < 0) {
      setI32(outStatus, e, n);
      setI32(outClustered, e, 0);
    } else {
      clusterTowers(n);
      jetBase += writeJets(n, jetCount, finalCount, jetBase, towerBase, withTowers != 0);
      towerBase += towersWritten;
      setI32(outStatus, e, STATUS_OK);
      setI32(outClustered, e, n);
    }
    setI32(outJetStart, e + 1, jetBase);
    setF64(outNs, e, nowNs() - began);
  }
  return jetBase;
}

/**
 * The first nearest-neighbour table of input event 0: outTowers[t] = jet index of tower t's
 * neighbour (-1: none within the reach); returns the tower count or a negative status.
 * For tests of the geometric step.
 */
export function neighbourTable(): i32 {
  const n = selectTowers(getI32(inStart, 0), getI32(inStart, 1));
  if (n < 0) return n;
  firstNeighbours(n, outTowers);
  return n;
}
