import { describe, expect, it } from 'vitest';
import { binDeposits, makeGridTables, wrapPhi } from '../host/clustering/grid.js';
import { ReferenceClusterer, deltaR2 } from '../host/clustering/reference.js';
import { DEFAULT_GRID, type ClusterSettings } from '../host/types.js';
import { seededRandom } from './support/small-events.js';

const grid = DEFAULT_GRID;
const tables = makeGridTables(grid);
const antiKt: ClusterSettings = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' };

function towerAt(ieta: number, iphi: number): number {
  return ieta * grid.phiBins + ((iphi % grid.phiBins) + grid.phiBins) % grid.phiBins;
}

function distanceR2(a: number, b: number): number {
  const ia = Math.floor(a / grid.phiBins), ib = Math.floor(b / grid.phiBins);
  return deltaR2(tables.etaCentre[ia], tables.phiCentre[a % grid.phiBins], tables.etaCentre[ib], tables.phiCentre[b % grid.phiBins]);
}

/**
 * soft towers everywhere within a square window of the given half-width around (ieta, iphi),
 * leaving out those at ΔR = R (within 1e-6) of any hard tower: rounding decides those
 */
function softAround(ieta: number, iphi: number, halfWidth: number, hard: number[], random: () => number) {
  const index: number[] = [];
  const et: number[] = [];
  for (let de = -halfWidth; de <= halfWidth; de++) {
    for (let dp = -halfWidth; dp <= halfWidth; dp++) {
      const e = ieta + de;
      if (e < 0 || e >= grid.etaBins) continue;
      const t = towerAt(e, iphi + dp);
      if (hard.includes(t) || index.includes(t)) continue;
      if (hard.some((h) => !offBoundary(distanceR2(h, t), antiKt.radius))) continue;
      index.push(t);
      et.push(0.2 + 0.6 * random());
    }
  }
  return { index, et };
}

/** true when the tower lies clearly inside or outside the circle: rounding decides ΔR = R */
function offBoundary(r2: number, radius: number): boolean {
  return Math.abs(Math.sqrt(r2) - radius) > 1e-6;
}

describe('anti-kt cone-like jets (arXiv:0802.1189, section 2)', () => {
  it('turns one hard tower among soft ones into a jet of exactly the towers within ΔR < R', () => {
    const random = seededRandom(7);
    const hard = towerAt(25, 10);
    const soft = softAround(25, 10, 7, [hard], random);
    const towerIndex = Int32Array.from([hard, ...soft.index]);
    const towerEt = Float64Array.from([200, ...soft.et]);
    const jets = new ReferenceClusterer(grid, antiKt).cluster(towerIndex, towerEt);
    const expected = [hard, ...soft.index.filter((t) => {
      const r2 = distanceR2(hard, t);
      expect(offBoundary(r2, 0.4)).toBe(true);
      return r2 < 0.4 * 0.4;
    })].sort((a, b) => a - b);
    expect(jets.pt[0]).toBeGreaterThan(200);
    expect(Array.from(jets.towers.subarray(jets.towerStart[0], jets.towerStart[0] + jets.towerCount[0]))).toEqual(expected);
  });

  it('gives the harder of two hard towers at R < ΔR < 2R a full circle', () => {
    const random = seededRandom(11);
    const harder = towerAt(25, 20);
    const softer = towerAt(25, 26); // six columns apart: ΔR ≈ 0.589, between R and 2R
    const r2Hard = distanceR2(harder, softer);
    expect(Math.sqrt(r2Hard)).toBeGreaterThan(0.4);
    expect(Math.sqrt(r2Hard)).toBeLessThan(0.8);
    const soft = softAround(25, 23, 9, [harder, softer], random);
    const towerIndex = Int32Array.from([harder, softer, ...soft.index]);
    const towerEt = Float64Array.from([300, 100, ...soft.et]);
    const jets = new ReferenceClusterer(grid, antiKt).cluster(towerIndex, towerEt);
    const leading = Array.from(jets.towers.subarray(jets.towerStart[0], jets.towerStart[0] + jets.towerCount[0]));
    const circle = [harder, ...soft.index.filter((t) => {
      const r2 = distanceR2(harder, t);
      expect(offBoundary(r2, 0.4)).toBe(true);
      return r2 < 0.16;
    })].sort((a, b) => a - b);
    expect(leading).toEqual(circle);
    expect(leading).not.toContain(softer);
  });
});

describe('infrared safety (arXiv:0802.1189, section 1; common practice for any safe jet algorithm)', () => {
  for (const [name, p] of [['anti-kt', -1], ['Cambridge/Aachen', 0], ['kt', 1]] as const) {
    it(`${name}: towers of 1e-9 GeV anywhere leave each hard jet's constituents together and its pt within the energy added`, () => {
      const random = seededRandom(100 + p);
      const settings: ClusterSettings = { ...antiKt, p };
      const hardIndex: number[] = [];
      const hardEt: number[] = [];
      for (const [ieta, iphi, et] of [[10, 5, 150], [12, 9, 80], [35, 40, 120], [30, 60, 60]]) {
        for (let de = -1; de <= 1; de++) for (let dp = -1; dp <= 1; dp++) {
          hardIndex.push(towerAt(ieta + de, iphi + dp));
          hardEt.push(de === 0 && dp === 0 ? et : et * 0.05 * (1 + random()));
        }
      }
      const clusterer = new ReferenceClusterer(grid, settings);
      const before = clusterer.cluster(Int32Array.from(hardIndex), Float64Array.from(hardEt));
      const occupied = new Set(hardIndex);
      const extraIndex: number[] = [];
      while (extraIndex.length < 400) {
        const t = Math.floor(random() * tables.towerTotal);
        if (!occupied.has(t)) { occupied.add(t); extraIndex.push(t); }
      }
      const added = extraIndex.length * 1e-9;
      const after = clusterer.cluster(Int32Array.from([...hardIndex, ...extraIndex]), Float64Array.from([...hardEt, ...extraIndex.map(() => 1e-9)]));
      const jetOfTower = new Map<number, number>();
      for (let k = 0; k < after.count; k++) {
        for (let n = 0; n < after.towerCount[k]; n++) jetOfTower.set(after.towers[after.towerStart[k] + n], k);
      }
      for (let k = 0; k < before.count; k++) {
        const members = Array.from(before.towers.subarray(before.towerStart[k], before.towerStart[k] + before.towerCount[k]));
        const homes = new Set(members.map((t) => jetOfTower.get(t)));
        expect(homes.size).toBe(1);
        const home = [...homes][0]!;
        expect(Math.abs(after.pt[home] - before.pt[k])).toBeLessThanOrEqual(added);
      }
    });
  }
});

describe('rapidity of a massless tower (PDG Review of Particle Physics, "Kinematics" section)', () => {
  it('equals the pseudorapidity -ln tan(θ/2) of its centre', () => {
    for (let ieta = 0; ieta < grid.etaBins; ieta += 7) {
      const eta = tables.etaCentre[ieta];
      const et = 10;
      const pz = et * tables.sinhEta[ieta];
      const energy = et * tables.coshEta[ieta];
      const rapidity = 0.5 * Math.log((energy + pz) / (energy - pz));
      const theta = Math.atan2(et, pz);
      expect(rapidity).toBeCloseTo(eta, 12);
      expect(-Math.log(Math.tan(theta / 2))).toBeCloseTo(eta, 12);
    }
  });
});

describe('grid and binning (clustering-spec.md sections 1-2)', () => {
  it('puts tower centres at etaMin + (ieta + 0.5) * width and (iphi + 0.5) * 2π / nPhi', () => {
    expect(tables.etaCentre[0]).toBe(-2.5 + 0.5 * (5 / 50));
    expect(tables.phiCentre[63]).toBe(63.5 * ((2 * Math.PI) / 64));
  });

  it('brings phi into [0, 2π) before binning and adds deposits in one tower', () => {
    const binned = binDeposits(tables, [0.05, 0.05, 0.06], [-0.01, 2 * Math.PI - 0.01, 6.28], [1, 2, 4]);
    expect(Array.from(binned.towerIndex)).toEqual([25 * 64 + 63]);
    expect(Array.from(binned.towerEt)).toEqual([7]);
    expect(wrapPhi(-1e-20)).toBeLessThan(2 * Math.PI);
  });

  it('counts deposits outside the eta acceptance without making the event invalid', () => {
    const binned = binDeposits(tables, [2.5, -2.6, 0], [1, 1, 1], [1, 1, 1]);
    expect(binned.problem).toBeNull();
    expect(binned.outsideAcceptance).toBe(2);
    expect(binned.towerIndex.length).toBe(1);
  });
});
