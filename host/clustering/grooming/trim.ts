// Trimming of one jet, the reference (clustering-spec.md section 12; arXiv:0912.1342): re-cluster
// the jet's real constituents with kt (p = 1) at R = RSUB, keep the subjets with
// pt_sub >= FCUT * pt_jet, and add the kept subjets' four-vectors in output order. Plain
// TypeScript written to be read: the engine's trimming is checked against it bit for bit.

import type { GridTables } from '../grid.js';
import { clusterReference, wrapAtan2 } from '../reference.js';
import type { ClusterSettings, TrimmedJets, TrimSettings } from '../../types.js';

/**
 * Trims one jet into row `row` of `out` (left all zero when no subjet is kept). `towerIndex`:
 * the jet's real constituents in increasing flat index, `towerEt` their et; `jetPt` the jet's
 * reported pt (after subtraction when subtraction is on).
 */
export function trimJet(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  jetPt: number,
  trim: TrimSettings,
  out: TrimmedJets,
  row: number,
): void {
  const settings: ClusterSettings = { p: 1, radius: trim.subjetRadius, ptMin: 0, threshold: 0, recombination: 'e' };
  // every final subjet, in section 6's output order
  const subjets = clusterReference(tables, towerIndex, towerEt, settings, { withTowers: false });
  const ptCut = trim.ptFraction * jetPt;
  let kept = 0;
  let towers = 0;
  let px = 0;
  let py = 0;
  let pz = 0;
  let energy = 0;
  for (let n = 0; n < subjets.count; n++) {
    if (!(subjets.pt[n] >= ptCut)) continue;
    if (kept === 0) {
      // the sum starts at the first kept subjet, not at 0 + it: ((px_1 + px_2) + px_3) ...
      px = subjets.px[n];
      py = subjets.py[n];
      pz = subjets.pz[n];
      energy = subjets.energy[n];
    } else {
      px = px + subjets.px[n];
      py = py + subjets.py[n];
      pz = pz + subjets.pz[n];
      energy = energy + subjets.energy[n];
    }
    kept++;
    towers += subjets.towerCount[n];
  }
  if (kept === 0) return; // the empty trimmed jet: all values 0, zero towers
  const kt2 = px * px + py * py;
  out.px[row] = px;
  out.py[row] = py;
  out.pz[row] = pz;
  out.energy[row] = energy;
  out.pt[row] = Math.sqrt(kt2);
  out.rapidity[row] = 0.5 * Math.log((energy + pz) / (energy - pz));
  out.phi[row] = wrapAtan2(Math.atan2(py, px));
  out.mass[row] = Math.sqrt(Math.max(0, energy * energy - px * px - py * py - pz * pz));
  out.towerCount[row] = towers;
  out.subjets[row] = kept;
}
