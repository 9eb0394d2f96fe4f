// The reference's pileup chain for one event, in the order of clustering-spec.md part two:
//   threshold -> SoftKiller -> ghosts -> clustering -> final jets -> areas, ρ, subtraction -> ptMin
// Plain TypeScript written to be read, like the reference clusterer it calls: a fast engine's
// chain is checked against this one bit for bit.

import { makeGridTables, selectTowers, type GridTables } from '../grid.js';
import { clusterReference } from '../reference.js';
import { allocateJetSet } from '../jet-set.js';
import type { ClusterSettings, Clusterer, Grid, JetSet, PileupSettings, RhoEstimator } from '../../types.js';
import { clusterWithGhosts, type GhostedJets } from './ghosts.js';
import { rhoFromKtJets, rhoFromPatches } from './rho.js';
import { checkPileupSettings } from './settings.js';
import { softKill } from './softkiller.js';
import { subtractFromJet } from './subtract.js';

/** ρ for subtraction when no estimator was chosen (spec section 9) */
export const DEFAULT_RHO: RhoEstimator = Object.freeze({ kind: 'patches', patch: Object.freeze({ etaRows: 5, phiColumns: 5 }) }) as RhoEstimator;

/** the estimator the chain runs: the one chosen, else patches 5:5 when subtracting, else none */
export function rhoEstimatorOf(pileup: PileupSettings): RhoEstimator | null {
  return pileup.rho ?? (pileup.subtract ? DEFAULT_RHO : null);
}

/** one reported jet while the chain works on it */
interface ChainJet {
  jetIndex: number;
  px: number;
  py: number;
  pz: number;
  energy: number;
  pt: number;
  rapidity: number;
  phi: number;
  mass: number;
  ptRaw: number;
  ghosts: number;
  area: number;
  /** real constituents, increasing flat index */
  towers: number[];
}

/**
 * Runs the chain on one valid event's towers (any order, before the threshold). Returns the
 * reported jets with their pileup values (`jets.pileup`), in output order.
 */
export function clusterWithPileup(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  settings: ClusterSettings,
  pileup: PileupSettings,
): JetSet {
  const grid = tables.grid;

  // threshold, then SoftKiller: the real towers, in increasing flat index
  let real = selectTowers(towerIndex, towerEt, settings.threshold);
  let etCut = 0;
  let killed = 0;
  if (pileup.softKiller) {
    const cut = softKill(grid, real.towerIndex, real.towerEt, pileup.softKiller);
    real = { towerIndex: cut.towerIndex, towerEt: cut.towerEt };
    etCut = cut.etCut;
    killed = cut.killed;
  }

  // clustering, with ghosts when areas are on; every final jet, before ptMin
  const clustered = pileup.areas
    ? clusterWithGhosts(tables, real.towerIndex, real.towerEt, settings, pileup.ghostEt)
    : clusterWithoutGhosts(tables, real.towerIndex, real.towerEt, settings);

  const estimator = rhoEstimatorOf(pileup);
  let rho = 0;
  if (estimator?.kind === 'patches') rho = rhoFromPatches(grid, real.towerIndex, real.towerEt, estimator.patch);
  else if (estimator?.kind === 'kt') rho = rhoFromKtJets(tables, real.towerIndex, real.towerEt, estimator.radius, pileup.ghostEt);

  // the jets with a real constituent; pure-ghost jets are never reported
  const { jets } = clustered;
  const reported: ChainJet[] = [];
  let subtractedAway = 0;
  for (let n = 0; n < jets.count; n++) {
    if (clustered.realCount[n] === 0) continue;
    const towers: number[] = [];
    for (let k = jets.towerStart[n]; k < jets.towerStart[n] + jets.towerCount[n]; k++) {
      if (!clustered.isGhost[jets.towers[k]]) towers.push(jets.towers[k]);
    }
    const jet: ChainJet = {
      jetIndex: clustered.jetIndex[n],
      px: jets.px[n], py: jets.py[n], pz: jets.pz[n], energy: jets.energy[n],
      pt: jets.pt[n], rapidity: jets.rapidity[n], phi: jets.phi[n], mass: jets.mass[n],
      ptRaw: jets.pt[n], ghosts: clustered.ghostCount[n], area: clustered.area[n], towers,
    };
    if (pileup.subtract) {
      const subtracted = subtractFromJet(jet.px, jet.py, jet.pz, jet.energy, jet.pt, jet.area, rho);
      if (subtracted === null) {
        subtractedAway++;
        continue;
      }
      Object.assign(jet, subtracted);
    }
    reported.push(jet);
  }

  // ptMin on the (subtracted) pt; decreasing pt, ties to the smaller index (sections 6 and 9)
  const kept = reported.filter((jet) => jet.pt >= settings.ptMin);
  kept.sort((a, b) => (a.pt !== b.pt ? (b.pt > a.pt ? 1 : -1) : a.jetIndex - b.jetIndex));
  return packJets(kept, { rho, etCut, killed, subtractedAway });
}

/** the plain clustering as a GhostedJets with no ghost anywhere, so the chain has one path */
function clusterWithoutGhosts(tables: GridTables, towerIndex: Int32Array, towerEt: Float64Array, settings: ClusterSettings): GhostedJets {
  const jetIndex: number[] = [];
  const jets = clusterReference(tables, towerIndex, towerEt, { ...settings, ptMin: 0 }, { withTowers: true, jetIndex });
  return {
    jets,
    jetIndex: Int32Array.from(jetIndex),
    realCount: jets.towerCount.slice(),
    ghostCount: new Int32Array(jets.count),
    area: new Float64Array(jets.count),
    isGhost: new Uint8Array(tables.towerTotal),
  };
}

function packJets(kept: ChainJet[], event: { rho: number; etCut: number; killed: number; subtractedAway: number }): JetSet {
  const count = kept.length;
  const jets = allocateJetSet(count);
  const ghosts = new Int32Array(count);
  const area = new Float64Array(count);
  const ptRaw = new Float64Array(count);
  let towerTotal = 0;
  for (let n = 0; n < count; n++) {
    const jet = kept[n];
    jets.px[n] = jet.px;
    jets.py[n] = jet.py;
    jets.pz[n] = jet.pz;
    jets.energy[n] = jet.energy;
    jets.pt[n] = jet.pt;
    jets.rapidity[n] = jet.rapidity;
    jets.phi[n] = jet.phi;
    jets.mass[n] = jet.mass;
    jets.towerCount[n] = jet.towers.length;
    jets.towerStart[n] = towerTotal;
    towerTotal += jet.towers.length;
    ghosts[n] = jet.ghosts;
    area[n] = jet.area;
    ptRaw[n] = jet.ptRaw;
  }
  jets.towers = new Int32Array(towerTotal);
  for (let n = 0; n < count; n++) jets.towers.set(kept[n].towers, jets.towerStart[n]);
  jets.pileup = { ...event, ghosts, area, ptRaw };
  return jets;
}

/** The reference behind the common Clusterer interface, with the pileup steps around it. */
export class PileupReferenceClusterer implements Clusterer {
  readonly name = 'reference';
  readonly settings: ClusterSettings;
  readonly pileup: PileupSettings;
  readonly tables: GridTables;

  constructor(grid: Grid, settings: ClusterSettings, pileup: PileupSettings, command = 'cluster') {
    checkPileupSettings(grid, settings, pileup, command);
    this.settings = { ...settings };
    this.pileup = { ...pileup };
    this.tables = makeGridTables(grid);
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    return clusterWithPileup(this.tables, towerIndex, towerEt, this.settings, this.pileup);
  }
}
