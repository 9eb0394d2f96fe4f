// Published properties of trimming (arXiv:0912.1342) and soft drop (arXiv:1402.2657), as the
// project defines them (clustering-spec.md section 12), on the reference and on the engine.
// Events are planted by hand on the grid (invented data).

import { describe, expect, it } from 'vitest';
import { binDeposits, makeGridTables } from '../host/clustering/grid.js';
import { WasmClusterer } from '../host/clustering/engine.js';
import { EngineGroomer } from '../host/clustering/grooming/engine-groomer.js';
import { GroomingClusterer } from '../host/clustering/grooming/groomer.js';
import { ReferenceGroomer } from '../host/clustering/grooming/reference-groomer.js';
import { ReferenceClusterer } from '../host/clustering/reference.js';
import { DEFAULT_GRID, type ClusterSettings, type Grid, type GroomingSettings, type JetSet } from '../host/types.js';
import { largeRadiusEvent } from './support/large-radius-events.js';
import { seededRandom } from './support/small-events.js';

const antiKt10: ClusterSettings = { p: -1, radius: 1.0, ptMin: 0, threshold: 0, recombination: 'e' };
const softDrop01: GroomingSettings = { trim: null, softDrop: { zCut: 0.1, beta: 0 } };
const trim02: GroomingSettings = { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null };

type Side = 'reference' | 'engine';

function groomedJets(side: Side, grid: Grid, grooming: GroomingSettings, towerIndex: Int32Array, towerEt: Float64Array): JetSet {
  const clusterer = side === 'reference'
    ? new GroomingClusterer(new ReferenceClusterer(grid, antiKt10), new ReferenceGroomer(grid, grooming, antiKt10.radius))
    : new GroomingClusterer(new WasmClusterer(grid, antiKt10), new EngineGroomer(grid, grooming, antiKt10.radius));
  return clusterer.cluster(towerIndex, towerEt);
}

/** the flat index of the tower at (ieta, iphi) */
const at = (grid: Grid, ieta: number, iphi: number) => ieta * grid.phiBins + iphi;

describe.each(['reference', 'engine'] as const)('grooming on the %s', (side) => {
  it('soft drop (beta = 0, z_cut = 0.1) removes the soft wide-angle tower of a two-tower jet exactly when z < 0.1 (arXiv:1402.2657, its condition z > z_cut)', () => {
    const grid = DEFAULT_GRID;
    const hard = at(grid, 25, 20);
    const soft = at(grid, 31, 24); // dR about 0.72: wide angle, inside R = 1.0
    for (const z of [0.02, 0.05, 0.09, 0.0999, 0.1001, 0.11, 0.2, 0.4, 0.5]) {
      const hardEt = 100;
      const softEt = (z * hardEt) / (1 - z); // softEt / (hardEt + softEt) = z, up to rounding
      const jets = groomedJets(side, grid, softDrop01, Int32Array.of(hard, soft), Float64Array.of(hardEt, softEt));
      expect(jets.count, `z ${z}`).toBe(1);
      const groomed = jets.softDrop!;
      if (z < 0.1) {
        expect(groomed.towerCount[0], `z ${z}`).toBe(1);
        expect(groomed.pt[0]).toBe(hardEt);
        expect([groomed.zg[0], groomed.deltaRg[0]]).toEqual([0, 0]);
      } else {
        expect(groomed.towerCount[0], `z ${z}`).toBe(2);
        expect(groomed.pt[0]).toBe(jets.pt[0]);
        expect(groomed.zg[0]).toBeCloseTo(z, 12);
      }
    }
  });

  it('trimming (0.2:0.05) keeps a planted three-prong decay\'s three subjets and drops a soft tower 0.25 away (arXiv:0912.1342)', () => {
    // cells of 0.05 in eta, so that 0.25 is five rows
    const grid: Grid = { etaMin: -2.5, etaMax: 2.5, etaBins: 100, phiBins: 64 };
    const prongs = [at(grid, 50, 30), at(grid, 58, 30), at(grid, 54, 34)]; // 0.4 and about 0.44 apart
    const softTower = at(grid, 45, 30); // 0.25 from the first prong, farther from the others
    const towerIndex = Int32Array.of(...prongs, softTower);
    const towerEt = Float64Array.of(60, 45, 30, 1.5); // 1.5 GeV < 0.05 * 135 GeV
    const jets = groomedJets(side, grid, trim02, towerIndex, towerEt);
    expect(jets.count).toBe(1);
    expect(jets.towerCount[0]).toBe(4);
    const trimmed = jets.trim!;
    expect(trimmed.subjets[0]).toBe(3);
    expect(trimmed.towerCount[0]).toBe(3);
    // the three prongs alone: their jet without the soft tower
    const prongsOnly = groomedJets(side, grid, trim02, Int32Array.of(...prongs), Float64Array.of(60, 45, 30));
    expect(trimmed.mass[0]).toBeCloseTo(prongsOnly.mass[0], 9);
    expect(trimmed.pt[0]).toBeCloseTo(prongsOnly.pt[0], 9);
  });

  it('soft drop on a jet of one tower returns it unchanged with zg = Rg = 0 (arXiv:1402.2657: nothing to decluster)', () => {
    const grid = DEFAULT_GRID;
    const jets = groomedJets(side, grid, softDrop01, Int32Array.of(at(grid, 10, 63)), Float64Array.of(73.25));
    const groomed = jets.softDrop!;
    for (const field of ['px', 'py', 'pz', 'energy', 'pt', 'rapidity', 'phi', 'mass'] as const) {
      expect(groomed[field][0], field).toBe(jets[field][0]);
    }
    expect([groomed.towerCount[0], groomed.zg[0], groomed.deltaRg[0]]).toEqual([1, 0, 0]);
  });

  it('grooming never increases a jet\'s pt, on 100 large-R events (arXiv:0912.1342, arXiv:1402.2657: both only remove constituents)', () => {
    const grid: Grid = { etaMin: -2, etaMax: 2, etaBins: 40, phiBins: 48 };
    const both: GroomingSettings = { trim: trim02.trim, softDrop: softDrop01.softDrop };
    const random = seededRandom(2024);
    let groomedJetsSeen = 0;
    for (let k = 0; k < 100; k++) {
      const event = largeRadiusEvent(grid, { objects: 2, noise: 0.1 }, random);
      const jets = groomedJets(side, grid, both, event.towerIndex, event.towerEt);
      for (let n = 0; n < jets.count; n++) {
        // a groomed jet that keeps every tower adds them in another order than the clustering
        // did, which can move its pt by a few ulp: the property holds up to rounding
        const ceiling = jets.pt[n] * (1 + 1e-12);
        expect(jets.trim!.pt[n], `event ${k} jet ${n}`).toBeLessThanOrEqual(ceiling);
        expect(jets.softDrop!.pt[n], `event ${k} jet ${n}`).toBeLessThanOrEqual(ceiling);
        if (jets.softDrop!.towerCount[n] < jets.towerCount[n]) groomedJetsSeen++;
      }
    }
    expect(groomedJetsSeen).toBeGreaterThan(50);
  }, 60_000);

  it('the soft-drop mass of a planted two-prong decay of mass M at pileup 0 lies within the grid\'s resolution of M (arXiv:1402.2657: grooming recovers the decay mass)', () => {
    const grid = DEFAULT_GRID;
    const tables = makeGridTables(grid);
    const random = seededRandom(80);
    const cellEta = (grid.etaMax - grid.etaMin) / grid.etaBins;
    const cellPhi = (2 * Math.PI) / grid.phiBins;
    const massOf = (pt1: number, eta1: number, phi1: number, pt2: number, eta2: number, phi2: number) =>
      Math.sqrt(2 * pt1 * pt2 * (Math.cosh(eta1 - eta2) - Math.cos(phi1 - phi2)));
    for (let k = 0; k < 20; k++) {
      // two massless prongs 0.3-0.7 apart sharing pt 30:70 .. 50:50; M is their invariant mass
      const eta1 = -1.5 + 3 * random();
      const phi1 = 2 * Math.PI * random();
      const separation = 0.3 + 0.4 * random();
      const direction = 2 * Math.PI * random();
      const eta2 = eta1 + separation * Math.cos(direction);
      const phi2 = phi1 + separation * Math.sin(direction);
      const pt1 = 150 + 100 * random();
      const pt2 = pt1 * (0.43 + 0.57 * random());
      const mass = massOf(pt1, eta1, phi1, pt2, eta2, phi2);
      // the grid's resolution: the largest change of that mass when each prong moves anywhere
      // within its tower (a tower points at its centre, spec section 2), over the towers' corners
      let resolution = 0;
      for (const [a, b, c, d] of cornerShifts()) {
        const shifted = massOf(pt1, eta1 + a * cellEta, phi1 + b * cellPhi, pt2, eta2 + c * cellEta, phi2 + d * cellPhi);
        resolution = Math.max(resolution, Math.abs(shifted - mass));
      }
      // soft wide-angle radiation that the plain jet takes in and soft drop removes: 0.9 from
      // the prongs' pt-weighted centre on either side, at right angles to the prongs' axis, so
      // farther from each prong than the prongs are from each other
      const centreEta = (pt1 * eta1 + pt2 * eta2) / (pt1 + pt2);
      const centrePhi = (pt1 * phi1 + pt2 * phi2) / (pt1 + pt2);
      const across = [-Math.sin(direction) * 0.9, Math.cos(direction) * 0.9];
      const etas = [eta1, eta2, centreEta + across[0], centreEta - across[0]];
      const phis = [phi1, phi2, centrePhi + across[1], centrePhi - across[1]];
      const ets = [pt1, pt2, 2, 1.5];
      const binned = binDeposits(tables, etas, phis, ets);
      const jets = groomedJets(side, grid, softDrop01, binned.towerIndex, binned.towerEt);
      const hardest = jets.softDrop!;
      expect([jets.towerCount[0], hardest.towerCount[0]], `decay ${k}: the soft towers are in the jet, not in the groomed jet`).toEqual([4, 2]);
      expect(Math.abs(hardest.mass[0] - mass), `decay ${k}: M ${mass}, groomed ${hardest.mass[0]}, plain ${jets.mass[0]}`).toBeLessThanOrEqual(resolution);
    }
  });
});

/** every combination of half-cell shifts (-0.5 or +0.5 in eta and phi) for two prongs */
function cornerShifts(): [number, number, number, number][] {
  const half = [-0.5, 0.5];
  const out: [number, number, number, number][] = [];
  for (const a of half) for (const b of half) for (const c of half) for (const d of half) out.push([a, b, c, d]);
  return out;
}
