// Final jets of one event into the batch output (clustering-spec.md section 6): pt = sqrt(kt2)
// >= ptMin, decreasing pt, ties to the smaller index; constituents in increasing flat index.
//
// finalPt f64[] holds -pt per kept final jet and finalOrder the sort permutation; jetLabel i32[]
// gives every jet the output rank of the final jet it ended in (-1: dropped by ptMin), filled
// from the last jet back, since a jet is always merged into a later one.

import { evIndex, jetPx, jetPy, jetPz, jetE, jetKt2, jetY, jetPhi, jetInto, jetLabel,
  finalJet, finalOrder, finalScratch, finalPt, outPx, outPy, outPz, outE, outPt, outY, outPhi,
  outMass, outTowerCount, outTowerStart, outTowers, outJetIndex, getF64, setF64, getI32, setI32 } from './layout';
import { ptMin } from './settings';
import { sortPermutation } from './sort';

/** towers written by the last writeJets() call */
export let towersWritten: i32 = 0;

/**
 * Writes the event's jets from output slot jetBase and their towers from towerBase; returns the
 * number of jets written. n towers, jetCount jets made, finalCount final.
 */
export function writeJets(n: i32, jetCount: i32, finalCount: i32, jetBase: i32, towerBase: i32, withTowers: bool): i32 {
  // kept final jets: finalScratch[m] = jet, finalPt[m] = -pt
  let kept = 0;
  for (let s = 0; s < finalCount; s++) {
    const jet = getI32(finalJet, s);
    setI32(jetLabel, jet, -1);
    const pt = sqrt<f64>(getF64(jetKt2, jet));
    if (pt >= ptMin) {
      setI32(finalScratch, kept, jet);
      setF64(finalPt, kept, -pt);
      setI32(finalOrder, kept, kept);
      kept++;
    }
  }
  // finalJet is free now: it serves as the sort's scratch
  sortPermutation(finalOrder, finalJet, kept, finalPt, finalScratch);
  for (let r = 0; r < kept; r++) {
    const jet = getI32(finalScratch, getI32(finalOrder, r));
    setI32(jetLabel, jet, r);
    const slot = jetBase + r;
    const px = getF64(jetPx, jet);
    const py = getF64(jetPy, jet);
    const pz = getF64(jetPz, jet);
    const e = getF64(jetE, jet);
    setF64(outPx, slot, px);
    setF64(outPy, slot, py);
    setF64(outPz, slot, pz);
    setF64(outE, slot, e);
    setF64(outPt, slot, sqrt<f64>(getF64(jetKt2, jet)));
    setF64(outY, slot, getF64(jetY, jet));
    setF64(outPhi, slot, getF64(jetPhi, jet));
    setF64(outMass, slot, sqrt<f64>(max<f64>(0, e * e - px * px - py * py - pz * pz)));
    setI32(outTowerCount, slot, 0);
    // ties after a later reordering (area subtraction) go by this index
    setI32(outJetIndex, slot, jet);
  }
  for (let jet = jetCount - 1; jet >= 0; jet--) {
    const into = getI32(jetInto, jet);
    if (into >= 0) setI32(jetLabel, jet, getI32(jetLabel, into));
  }
  for (let t = 0; t < n; t++) {
    const label = getI32(jetLabel, t);
    if (label >= 0) {
      const slot = jetBase + label;
      setI32(outTowerCount, slot, getI32(outTowerCount, slot) + 1);
    }
  }
  let start = towerBase;
  for (let r = 0; r < kept; r++) {
    const slot = jetBase + r;
    setI32(outTowerStart, slot, start);
    start += getI32(outTowerCount, slot);
  }
  towersWritten = withTowers ? start - towerBase : 0;
  if (withTowers) {
    // finalScratch becomes the fill position of each output jet
    for (let r = 0; r < kept; r++) setI32(finalScratch, r, getI32(outTowerStart, jetBase + r));
    for (let t = 0; t < n; t++) {
      const label = getI32(jetLabel, t);
      if (label < 0) continue;
      const at = getI32(finalScratch, label);
      setI32(outTowers, at, getI32(evIndex, t));
      setI32(finalScratch, label, at + 1);
    }
  }
  return kept;
}
