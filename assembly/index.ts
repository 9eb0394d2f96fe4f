// Entry points of the engine. The host calls setup() once, writes the grid tables into their
// regions, calls configureEngine() once, then per batch writes towers into the input regions,
// calls clusterBatch() and reads jets from the output regions (region() gives the pointers;
// the numbering is mirrored in host/clustering/engine.ts). Memory layout: layout.ts.

import { reserve, getI32, setI32, setF64, inStart, outJetStart, outNs, outClustered, outStatus,
  outTowers, etaCentre, sinhEta, coshEta, phiCentre, cosPhi, sinPhi, inIndex, inEt, outPx, outPy,
  outPz, outE, outPt, outY, outPhi, outMass, outTowerCount, outTowerStart, etaBins, phiBins } from './layout';
import { configure } from './settings';
import { initCells, initPadding } from './cells';
import { initTree } from './tournament';
import { buildOffsets } from './offsets';
import { initInput, selectTowers } from './input';
import { clusterTowers, firstNeighbours, finalCount, jetCount } from './sequence';
import { writeJets, towersWritten } from './output';

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

/** Pointer of a region, by the number used in host/clustering/engine.ts. */
export function region(id: i32): usize {
  switch (id) {
    case 0: return etaCentre;
    case 1: return sinhEta;
    case 2: return coshEta;
    case 3: return phiCentre;
    case 4: return cosPhi;
    case 5: return sinPhi;
    case 6: return inIndex;
    case 7: return inEt;
    case 8: return inStart;
    case 9: return outJetStart;
    case 10: return outNs;
    case 11: return outClustered;
    case 12: return outStatus;
    case 13: return outPx;
    case 14: return outPy;
    case 15: return outPz;
    case 16: return outE;
    case 17: return outPt;
    case 18: return outY;
    case 19: return outPhi;
    case 20: return outMass;
    case 21: return outTowerCount;
    case 22: return outTowerStart;
    case 23: return outTowers;
  }
  return 0;
}

/**
 * Clusters events 0..eventCount-1 of the input (event e's towers are inStart[e]..inStart[e+1]);
 * returns the number of jets written. Per event: outJetStart (eventCount + 1 offsets),
 * outNs (clustering time, ns), outClustered (towers that entered), outStatus (0, or -1 for an
 * index outside the grid, -2 for a repeated index: such an event gets no jets).
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
      setI32(outStatus, e, 0);
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
