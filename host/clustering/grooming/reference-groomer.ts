// The reference's grooming of one event's reported jets (clustering-spec.md section 12): each
// jet's real constituents, in increasing flat index with their et, go through trim.ts and
// soft-drop.ts. Written to be read; the engine's groomer (engine-groomer.ts) is checked
// against it bit for bit.

import { makeGridTables, type GridTables } from '../grid.js';
import type { Grid, GroomingSettings, JetSet } from '../../types.js';
import type { JetGroomer } from './groomer.js';
import { allocateSoftDropJets, allocateTrimmedJets } from './rows.js';
import { softDropJet } from './soft-drop.js';
import { trimJet } from './trim.js';

export class ReferenceGroomer implements JetGroomer {
  readonly grooming: GroomingSettings;
  private readonly tables: GridTables;

  /** `jetRadius`: the main clustering's R (soft drop's dR / R) */
  constructor(grid: Grid, grooming: GroomingSettings, private readonly jetRadius: number) {
    this.grooming = { ...grooming };
    this.tables = makeGridTables(grid);
  }

  groom(jets: JetSet, towerIndex: Int32Array, towerEt: Float64Array): void {
    const { trim, softDrop } = this.grooming;
    if (trim) jets.trim = allocateTrimmedJets(jets.count);
    if (softDrop) jets.softDrop = allocateSoftDropJets(jets.count);
    if (!trim && !softDrop) return;
    // every reported tower is one of the input's, with the et it came in with
    const cellEt = new Float64Array(this.tables.towerTotal);
    for (let k = 0; k < towerIndex.length; k++) cellEt[towerIndex[k]] = towerEt[k];
    for (let n = 0; n < jets.count; n++) {
      const start = jets.towerStart[n];
      const constituents = jets.towers.subarray(start, start + jets.towerCount[n]);
      const ets = Float64Array.from(constituents, (t) => cellEt[t]);
      if (trim) trimJet(this.tables, constituents, ets, jets.pt[n], trim, jets.trim!, n);
      if (softDrop) softDropJet(this.tables, constituents, ets, this.jetRadius, softDrop, jets.softDrop!, n);
    }
  }
}
