// Grooming as the last step of an event (clustering-spec.md part two, order of steps: after
// subtraction and ptMin): a JetGroomer adds `trim` and `softDrop` rows to the reported jets,
// and GroomingClusterer puts one behind any clusterer that reports its jets' towers.

import type { Clusterer, ClusterSettings, GroomingSettings, JetSet } from '../../types.js';

/** What a groomer needs: the reported jets (with their real towers) and the event's input towers. */
export interface JetGroomer {
  readonly grooming: GroomingSettings;
  /** Sets jets.trim and jets.softDrop (those that are on); `towerIndex`/`towerEt` is the event's
   * input, any order, before the threshold: it gives each constituent its et. */
  groom(jets: JetSet, towerIndex: Int32Array, towerEt: Float64Array): void;
}

/** A clusterer whose jets come out groomed. `groomNs`: the last event's grooming time, ns. */
export class GroomingClusterer implements Clusterer {
  readonly name: string;
  readonly settings: ClusterSettings;
  groomNs = 0;
  /** report the jets' constituent towers (grooming needs them; they are left out afterwards when false) */
  withTowers = true;

  constructor(readonly base: Clusterer, readonly groomer: JetGroomer) {
    this.name = base.name;
    this.settings = base.settings;
    // grooming re-clusters each jet's towers, so the base must report them
    if ('withTowers' in base) (base as { withTowers: boolean }).withTowers = true;
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const jets = this.base.cluster(towerIndex, towerEt);
    const began = performance.now();
    this.groomer.groom(jets, towerIndex, towerEt);
    this.groomNs = (performance.now() - began) * 1e6;
    if (!this.withTowers) jets.towers = new Int32Array(0);
    return jets;
  }
}
