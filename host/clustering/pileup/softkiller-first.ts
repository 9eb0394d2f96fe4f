// SoftKiller in front of a clusterer that has no pileup chain of its own: the window finder,
// which spec section 11 places "after the threshold and SoftKiller, instead of clustering"
// (areas, ρ and subtraction do not apply to it). The towers it is given are those SoftKiller
// keeps (section 10), and its jets report the event's etCut and killed; the per-jet values are
// those of a run without areas or subtraction (ghosts 0, area 0, ptRaw = pt).

import { selectTowers } from '../grid.js';
import type { ClusterSettings, Clusterer, Grid, JetSet, PatchSize } from '../../types.js';
import { softKill } from './softkiller.js';

export class SoftKillerFirst implements Clusterer {
  readonly name: string;
  readonly settings: ClusterSettings;

  constructor(
    private readonly grid: Grid,
    private readonly patch: PatchSize,
    private readonly inner: Clusterer,
  ) {
    this.name = inner.name;
    this.settings = inner.settings;
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const selected = selectTowers(towerIndex, towerEt, this.settings.threshold);
    const kept = softKill(this.grid, selected.towerIndex, selected.towerEt, this.patch);
    const jets = this.inner.cluster(kept.towerIndex, kept.towerEt);
    jets.pileup = {
      rho: 0, etCut: kept.etCut, killed: kept.killed, subtractedAway: 0,
      ghosts: new Int32Array(jets.count), area: new Float64Array(jets.count), ptRaw: jets.pt.slice(0, jets.count),
    };
    return jets;
  }
}
