// Grooming of large-R jets (clustering-spec.md section 12), with the engine's own clustering: an
// engine instance set up for grooming takes a batch whose "events" are the jets, each the list
// of its real constituents (inIndex/inEt/inStart, layout.ts), re-clusters each one, and writes
// one groomed row per jet (groomPx .. groomDeltaR).
//
// - Trimming (arXiv:0912.1342): the instance is configured with p = 1, R = RSUB and re-clusters
//   on the event grid's cells (sequence.ts); the final subjets in section 6's order (as
//   output.ts sorts them), those with pt >= FCUT * pt_jet summed.
// - Soft drop (arXiv:1402.2657): p = 0, R = 1 and no beam candidates (settings.ts beamsOff),
//   re-clustered on a table of the jet's live jets (groom-pairs.ts) down to one jet; then the
//   merging tree is walked from its root.
//
// nodeTowers, nodeParentA, nodeParentB (layout.ts) hold each jet's towers and parents, built
// from jetInto after the sequence: a jet is always made from two earlier ones.

import { inStart, outStatus, jetKt2, jetY, jetPhi, jetPx, jetPy, jetPz, jetE, jetInto, finalJet,
  finalOrder, finalScratch, finalPt, groomJetPt, groomPx, groomPy, groomPz, groomE, groomPt, groomY,
  groomPhi, groomMass, groomTowers, groomSubjets, groomZ, groomDeltaR, nodeTowers, nodeParentA,
  nodeParentB, inIndex, inEt, evIndex, evEt, cellTotal, getF64, setF64, getI32, setI32 } from './layout';
import { setBeamsOff, TWO_PI } from './settings';
import { selectTowers, towerKept } from './input';
import { pairCluster, pairJetCount } from './groom-pairs';
import { clusterTowers, finalCount, jetCount } from './sequence';
import { deltaR2 } from './kinematics';
import { sortPermutation } from './sort';
import { STATUS_OK, GROOM_TRIM, GROOM_SOFT_DROP, GROOM_REGION_JET_PT, GROOM_REGION_PX, GROOM_REGION_PY,
  GROOM_REGION_PZ, GROOM_REGION_ENERGY, GROOM_REGION_PT, GROOM_REGION_RAPIDITY, GROOM_REGION_PHI, GROOM_REGION_MASS,
  GROOM_REGION_TOWERS, GROOM_REGION_SUBJETS, GROOM_REGION_ZG, GROOM_REGION_DELTA_RG } from './shared-constants';

let groomMode: i32 = 0;
/** trimming's FCUT */
let ptFraction: f64 = 0;
/** soft drop's ZCUT, BETA and the main clustering's R */
let zCut: f64 = 0;
let beta: f64 = 0;
let jetRadius: f64 = 1;

/** Fixes what groomBatch() does; once, after configureEngine() (whose p and R must be trimming's
 * 1 and RSUB, or soft drop's 0 and 1). `cut`: FCUT or ZCUT. */
export function configureGroomer(mode: i32, cut: f64, betaValue: f64, radius: f64): void {
  groomMode = mode;
  ptFraction = cut;
  zCut = cut;
  beta = betaValue;
  jetRadius = radius;
  setBeamsOff(mode == GROOM_SOFT_DROP);
}

/** Pointer of a grooming region, by its id (shared-constants.ts). */
export function groomRegion(id: i32): usize {
  switch (id) {
    case GROOM_REGION_JET_PT: return groomJetPt;
    case GROOM_REGION_PX: return groomPx;
    case GROOM_REGION_PY: return groomPy;
    case GROOM_REGION_PZ: return groomPz;
    case GROOM_REGION_ENERGY: return groomE;
    case GROOM_REGION_PT: return groomPt;
    case GROOM_REGION_RAPIDITY: return groomY;
    case GROOM_REGION_PHI: return groomPhi;
    case GROOM_REGION_MASS: return groomMass;
    case GROOM_REGION_TOWERS: return groomTowers;
    case GROOM_REGION_SUBJETS: return groomSubjets;
    case GROOM_REGION_ZG: return groomZ;
    case GROOM_REGION_DELTA_RG: return groomDeltaR;
  }
  return 0;
}

/**
 * Grooms jets 0..count-1 of the input (jet e's constituents are inStart[e]..inStart[e+1], and
 * for trimming its reported pt is groomJetPt[e]); writes row e of the groomed regions and
 * outStatus[e]. Called once per event.
 */
export function groomBatch(count: i32): void {
  for (let e = 0; e < count; e++) {
    clearRow(e);
    const n = selectConstituents(getI32(inStart, e), getI32(inStart, e + 1));
    setI32(outStatus, e, n < 0 ? n : STATUS_OK);
    if (n <= 0) continue;
    if (groomMode == GROOM_TRIM) {
      // the event grid's own sequence: at R = RSUB its searches stay short; the live-jet table
      // with beams added (groom-pairs.ts) took 1.03-1.07 times as long, even as the second of a
      // fixed pair (bench/grooming-pair.bench.ts), the place that favours, so it serves soft drop
      clusterTowers(n);
      trim(e, n);
    } else if (groomMode == GROOM_SOFT_DROP) {
      pairCluster(n);
      softDrop(e, n);
    }
  }
}

/** selectTowers() for one jet's constituents, which the host passes in increasing flat index:
 * one pass while they are (then the sort and its repeat check have nothing to do), else
 * selectTowers() itself. */
function selectConstituents(start: i32, end: i32): i32 {
  const total = <u32>cellTotal;
  let n = 0;
  let previous = -1;
  for (let k = start; k < end; k++) {
    const index = getI32(inIndex, k);
    if (<u32>index >= total || index <= previous) return selectTowers(start, end);
    const et = getF64(inEt, k);
    if (towerKept(et)) {
      setI32(evIndex, n, index);
      setF64(evEt, n, et);
      n++;
      previous = index;
    }
  }
  return n;
}

function clearRow(e: i32): void {
  setF64(groomPx, e, 0);
  setF64(groomPy, e, 0);
  setF64(groomPz, e, 0);
  setF64(groomE, e, 0);
  setF64(groomPt, e, 0);
  setF64(groomY, e, 0);
  setF64(groomPhi, e, 0);
  setF64(groomMass, e, 0);
  setI32(groomTowers, e, 0);
  setI32(groomSubjets, e, 0);
  setF64(groomZ, e, 0);
  setF64(groomDeltaR, e, 0);
}

/** Each jet's towers and parents, from the n towers up to jet `total` - 1. */
function buildTree(n: i32, total: i32): void {
  for (let j = 0; j < total; j++) {
    setI32(nodeTowers, j, j < n ? 1 : 0);
    setI32(nodeParentA, j, -1);
  }
  for (let j = 0; j < total; j++) {
    const into = getI32(jetInto, j);
    if (into < 0) continue;
    setI32(nodeTowers, into, getI32(nodeTowers, into) + getI32(nodeTowers, j));
    // jets are visited in increasing index, so the smaller parent comes first
    if (getI32(nodeParentA, into) < 0) setI32(nodeParentA, into, j);
    else setI32(nodeParentB, into, j);
  }
}

/** Trimming: the final subjets in output order, those with pt >= FCUT * pt_jet summed. */
function trim(e: i32, n: i32): void {
  buildTree(n, jetCount);
  const subjets = finalCount;
  for (let s = 0; s < subjets; s++) {
    const jet = getI32(finalJet, s);
    setI32(finalScratch, s, jet);
    setF64(finalPt, s, -sqrt<f64>(getF64(jetKt2, jet)));
    setI32(finalOrder, s, s);
  }
  // decreasing pt, ties to the smaller index (section 6); finalJet serves as the sort's scratch
  sortPermutation(finalOrder, finalJet, subjets, finalPt, finalScratch);
  const ptCut = ptFraction * getF64(groomJetPt, e);
  let kept = 0;
  let towers = 0;
  let px: f64 = 0;
  let py: f64 = 0;
  let pz: f64 = 0;
  let energy: f64 = 0;
  for (let r = 0; r < subjets; r++) {
    const jet = getI32(finalScratch, getI32(finalOrder, r));
    if (!(sqrt<f64>(getF64(jetKt2, jet)) >= ptCut)) continue;
    if (kept == 0) {
      // the sum starts at the first kept subjet: ((px_1 + px_2) + px_3) ...
      px = getF64(jetPx, jet);
      py = getF64(jetPy, jet);
      pz = getF64(jetPz, jet);
      energy = getF64(jetE, jet);
    } else {
      px = px + getF64(jetPx, jet);
      py = py + getF64(jetPy, jet);
      pz = pz + getF64(jetPz, jet);
      energy = energy + getF64(jetE, jet);
    }
    kept++;
    towers += getI32(nodeTowers, jet);
  }
  if (kept == 0) return;
  const kt2 = px * px + py * py;
  setF64(groomPx, e, px);
  setF64(groomPy, e, py);
  setF64(groomPz, e, pz);
  setF64(groomE, e, energy);
  setF64(groomPt, e, sqrt<f64>(kt2));
  setF64(groomY, e, 0.5 * Math.log((energy + pz) / (energy - pz)));
  let phi = Math.atan2(py, px);
  if (phi < 0) phi = phi + TWO_PI;
  if (phi >= TWO_PI) phi = phi - TWO_PI;
  setF64(groomPhi, e, phi);
  setF64(groomMass, e, sqrt<f64>(max<f64>(0, energy * energy - px * px - py * py - pz * pz)));
  setI32(groomTowers, e, towers);
  setI32(groomSubjets, e, kept);
}

/** Soft drop: from the root down the harder branch until a merge passes z > ZCUT (dR / R)^BETA. */
function softDrop(e: i32, n: i32): void {
  // the last jet made is the root of the one tree (no beams)
  const root = pairJetCount - 1;
  buildTree(n, root + 1);
  let node = root;
  let zg: f64 = 0;
  let deltaRg: f64 = 0;
  while (getI32(nodeParentA, node) >= 0) {
    const a = getI32(nodeParentA, node);
    const b = getI32(nodeParentB, node);
    const kt2a = getF64(jetKt2, a);
    const kt2b = getF64(jetKt2, b);
    const ptA = sqrt<f64>(kt2a);
    const ptB = sqrt<f64>(kt2b);
    const z = min<f64>(ptA, ptB) / (ptA + ptB);
    const dR = sqrt<f64>(deltaR2(getF64(jetY, a), getF64(jetPhi, a), getF64(jetY, b), getF64(jetPhi, b)));
    if (z > zCut * Math.pow(dR / jetRadius, beta)) {
      zg = z;
      deltaRg = dR;
      break;
    }
    // the harder parent: larger kt2, ties to the smaller index (a < b)
    node = kt2b > kt2a ? b : a;
  }
  const px = getF64(jetPx, node);
  const py = getF64(jetPy, node);
  const pz = getF64(jetPz, node);
  const energy = getF64(jetE, node);
  setF64(groomPx, e, px);
  setF64(groomPy, e, py);
  setF64(groomPz, e, pz);
  setF64(groomE, e, energy);
  setF64(groomPt, e, sqrt<f64>(getF64(jetKt2, node)));
  setF64(groomY, e, getF64(jetY, node));
  setF64(groomPhi, e, getF64(jetPhi, node));
  setF64(groomMass, e, sqrt<f64>(max<f64>(0, energy * energy - px * px - py * py - pz * pz)));
  setI32(groomTowers, e, getI32(nodeTowers, node));
  setF64(groomZ, e, zg);
  setF64(groomDeltaR, e, deltaRg);
}
