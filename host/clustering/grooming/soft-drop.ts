// Soft drop of one jet, the reference (clustering-spec.md section 12; arXiv:1402.2657): re-cluster
// the jet's real constituents with Cambridge/Aachen (p = 0, R = 1) and no beam, down to one jet,
// then walk the merging tree from its root, dropping the softer branch while
// z <= ZCUT * (dR / R)^BETA. Plain TypeScript written to be read: the engine's soft drop is
// checked against it bit for bit.

import type { GridTables } from '../grid.js';
import { clusterReference, deltaR2, type ClusterTree } from '../reference.js';
import type { ClusterSettings, SoftDropJets, SoftDropSettings } from '../../types.js';

/** p = 0 and R = 1, so that a pair's measure is its dR2 exactly (spec section 12) */
const CAMBRIDGE_AACHEN_UNIT_RADIUS: Readonly<ClusterSettings> = Object.freeze({ p: 0, radius: 1, ptMin: 0, threshold: 0, recombination: 'e' });

/**
 * Soft drop of one jet into row `row` of `out`. `towerIndex`: the jet's real constituents in
 * increasing flat index (at least one), `towerEt` their et; `jetRadius` the main clustering's R.
 */
export function softDropJet(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  jetRadius: number,
  softDrop: SoftDropSettings,
  out: SoftDropJets,
  row: number,
): void {
  if (towerIndex.length === 0) return;
  const tree = {} as ClusterTree;
  clusterReference(tables, towerIndex, towerEt, CAMBRIDGE_AACHEN_UNIT_RADIUS, { withTowers: false, pairsOnly: true, tree });
  const { px, py, pz, energy, kt2, y, phi, parentA, parentB } = tree;

  // from the root (the last jet made) down the harder branch until a merge passes the condition
  let node = tree.jetCount - 1;
  let zg = 0;
  let deltaRg = 0;
  while (parentA[node] !== -1) {
    const a = parentA[node];
    const b = parentB[node];
    const ptA = Math.sqrt(kt2[a]);
    const ptB = Math.sqrt(kt2[b]);
    const z = Math.min(ptA, ptB) / (ptA + ptB);
    const dR = Math.sqrt(deltaR2(y[a], phi[a], y[b], phi[b]));
    if (z > softDrop.zCut * Math.pow(dR / jetRadius, softDrop.beta)) {
      zg = z;
      deltaRg = dR;
      break;
    }
    // the harder parent: larger kt2, ties to the smaller index (a < b)
    node = kt2[b] > kt2[a] ? b : a;
  }

  out.px[row] = px[node];
  out.py[row] = py[node];
  out.pz[row] = pz[node];
  out.energy[row] = energy[node];
  out.pt[row] = Math.sqrt(kt2[node]);
  out.rapidity[row] = y[node];
  out.phi[row] = phi[node];
  out.mass[row] = Math.sqrt(Math.max(0, energy[node] * energy[node] - px[node] * px[node] - py[node] * py[node] - pz[node] * pz[node]));
  out.towerCount[row] = tree.towerCount[node];
  out.zg[row] = zg;
  out.deltaRg[row] = deltaRg;
}
