// One instance of the WebAssembly engine that clusters ghost-filled grids (clustering-spec.md
// section 8) through its clusterGhostGrid entry (assembly/ghost-grid.ts): the host writes only
// the event's real towers, the engine fills every other cell with a ghost, and the final jets are
// read straight from the engine's output regions, not copied. Its views are valid until the next
// call.

import { checkGrid, type GridTables } from '../grid.js';
import { checkEngineSettings, ENGINE_OK, REGION, startEngineInstance, type EngineExports } from '../engine-module.js';
import type { ClusterSettings, JetSet } from '../../types.js';

interface GhostGridExports extends EngineExports {
  clusterGhostGrid(ghostEt: number, withTowers: number): number;
}

/** The final jets of the last event, as views of the engine's output regions (the first
 * `count` entries of each), in section 6's order; the fields and meanings of BatchJets. */
export interface EngineJetRows extends Omit<JetSet, 'pileup' | 'trim' | 'softDrop'> {
  jetIndex: Int32Array;
}

export class GhostGridEngine {
  /** the real towers of the next event: write the first `count`, then call cluster(count) */
  readonly realIndex: Int32Array;
  readonly realEt: Float64Array;
  readonly jets: EngineJetRows;
  private readonly exports: GhostGridExports;
  private readonly inStart: Int32Array;
  private readonly outStatus: Int32Array;

  constructor(tables: GridTables, settings: ClusterSettings, private readonly ghostEt: number, module: WebAssembly.Module) {
    const { grid, towerTotal } = tables;
    checkGrid(grid);
    checkEngineSettings(settings);
    const wta = settings.recombination === 'wta' ? 1 : 0;
    // the chain hands over towers already past the threshold, and wants every final jet
    this.exports = startEngineInstance<GhostGridExports>(module, tables, towerTotal, 1, { p: settings.p, radius: settings.radius, ptMin: 0, threshold: 0, wta });
    const e = this.exports;
    // memory never grows after configureEngine(): views made now stay valid
    const buffer = e.memory.buffer;
    const f64 = (id: number) => new Float64Array(buffer, e.region(id), towerTotal);
    const i32 = (id: number) => new Int32Array(buffer, e.region(id), towerTotal);
    this.realIndex = i32(REGION.inIndex);
    this.realEt = f64(REGION.inEt);
    this.inStart = new Int32Array(buffer, e.region(REGION.inStart), 2);
    this.outStatus = new Int32Array(buffer, e.region(REGION.outStatus), 1);
    this.jets = {
      count: 0,
      px: f64(REGION.outPx), py: f64(REGION.outPy), pz: f64(REGION.outPz), energy: f64(REGION.outE),
      pt: f64(REGION.outPt), rapidity: f64(REGION.outY), phi: f64(REGION.outPhi), mass: f64(REGION.outMass),
      towerCount: i32(REGION.outTowerCount), towerStart: i32(REGION.outTowerStart), towers: i32(REGION.outTowers),
      jetIndex: i32(REGION.outJetIndex),
    };
  }

  /** Clusters the grid of the first `count` real towers written and ghosts; the jets are in `jets`. */
  cluster(count: number, withTowers: boolean): EngineJetRows {
    this.inStart[0] = 0;
    this.inStart[1] = count;
    this.jets.count = this.exports.clusterGhostGrid(this.ghostEt, withTowers ? 1 : 0);
    // the chain checks indices before: a status here is a fault of the chain itself
    if (this.outStatus[0] !== ENGINE_OK) throw new Error('engine: a real tower of the ghost grid lies outside the grid');
    return this.jets;
  }
}
