// Fixed-point emulation: tower energies on a grid of lsbGeV, then the double-precision
// reference (emulate.ts says why and what it costs).

import { ReferenceClusterer } from './reference.js';
import { emulationName } from './emulation-mode.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';

/** Tower energies on a grid of lsbGeV, then the double-precision reference. */
export class QuantisedClusterer implements Clusterer {
  readonly name: string;
  readonly settings: ClusterSettings;
  readonly lsbGeV: number;
  private readonly reference: ReferenceClusterer;
  private index = new Int32Array(256);
  private et = new Float64Array(256);

  constructor(grid: Grid, settings: ClusterSettings, lsbGeV: number) {
    this.lsbGeV = lsbGeV;
    this.name = emulationName({ lsbGeV });
    this.settings = { ...settings };
    this.reference = new ReferenceClusterer(grid, settings);
  }

  /** withTowers of the underlying reference (constituent lists on request) */
  get withTowers(): boolean { return this.reference.withTowers; }
  set withTowers(value: boolean) { this.reference.withTowers = value; }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    if (towerIndex.length > this.index.length) {
      this.index = new Int32Array(towerIndex.length);
      this.et = new Float64Array(towerIndex.length);
    }
    const lsb = this.lsbGeV;
    let kept = 0;
    for (let k = 0; k < towerIndex.length; k++) {
      const counts = Math.round(towerEt[k] / lsb);
      if (!(counts > 0)) continue;
      this.index[kept] = towerIndex[k];
      this.et[kept] = counts * lsb;
      kept++;
    }
    return this.reference.cluster(this.index.subarray(0, kept), this.et.subarray(0, kept));
  }
}
