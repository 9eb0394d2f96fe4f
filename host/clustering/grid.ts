// The tower grid, tower centres, validation and binning (clustering-spec.md sections 1-2).
// Per-grid tables hold the centres and the host's Math values of cos/sin/sinh/cosh, so every
// clusterer (reference and engine) builds tower four-vectors from the very same doubles.

import type { Grid, TowerCounts } from '../types.js';

const TWO_PI = 2 * Math.PI;
/** |et| above this makes an event invalid (spec section 1) */
export const MAX_ABS_ET = 1e150;
/** towers below this are dropped like threshold ones: their measures would overflow */
export const MIN_ET = 1e-150;

export interface GridTables {
  grid: Grid;
  towerTotal: number;
  /** per eta row */
  etaCentre: Float64Array;
  sinhEta: Float64Array;
  coshEta: Float64Array;
  /** per phi column */
  phiCentre: Float64Array;
  cosPhi: Float64Array;
  sinPhi: Float64Array;
}

/** Throws a one-line error naming the bad field when the grid cannot be used. */
export function checkGrid(grid: Grid, where = 'grid'): void {
  const { etaMin, etaMax, etaBins, phiBins } = grid;
  if (!Number.isFinite(etaMin) || !Number.isFinite(etaMax) || !(etaMax > etaMin)) {
    throw new Error(`${where}: eta range must be finite with etaMax > etaMin, got [${etaMin}, ${etaMax})`);
  }
  for (const [name, value] of [['etaBins', etaBins], ['phiBins', phiBins]] as const) {
    if (!Number.isInteger(value) || value < 1 || value > 4096) {
      throw new Error(`${where}: ${name} must be an integer in 1..4096, got ${value}`);
    }
  }
  if (etaBins * phiBins > 1 << 22) {
    throw new Error(`${where}: etaBins * phiBins must be at most ${1 << 22}, got ${etaBins * phiBins}`);
  }
}

export function sameGrid(a: Grid, b: Grid): boolean {
  return a.etaMin === b.etaMin && a.etaMax === b.etaMax && a.etaBins === b.etaBins && a.phiBins === b.phiBins;
}

export function describeGrid(grid: Grid): string {
  return `eta [${grid.etaMin}, ${grid.etaMax}) in ${grid.etaBins} bins, phi in ${grid.phiBins} bins`;
}

/** Centres and trigonometric tables, in the spec's order of operations. */
export function makeGridTables(grid: Grid): GridTables {
  checkGrid(grid);
  const { etaMin, etaMax, etaBins, phiBins } = grid;
  const etaCentre = new Float64Array(etaBins);
  const sinhEta = new Float64Array(etaBins);
  const coshEta = new Float64Array(etaBins);
  const etaWidth = (etaMax - etaMin) / etaBins;
  for (let ieta = 0; ieta < etaBins; ieta++) {
    const eta = etaMin + (ieta + 0.5) * etaWidth;
    etaCentre[ieta] = eta;
    sinhEta[ieta] = Math.sinh(eta);
    coshEta[ieta] = Math.cosh(eta);
  }
  const phiCentre = new Float64Array(phiBins);
  const cosPhi = new Float64Array(phiBins);
  const sinPhi = new Float64Array(phiBins);
  const phiWidth = TWO_PI / phiBins;
  for (let iphi = 0; iphi < phiBins; iphi++) {
    const phi = (iphi + 0.5) * phiWidth;
    phiCentre[iphi] = phi;
    cosPhi[iphi] = Math.cos(phi);
    sinPhi[iphi] = Math.sin(phi);
  }
  return { grid, towerTotal: etaBins * phiBins, etaCentre, sinhEta, coshEta, phiCentre, cosPhi, sinPhi };
}

/**
 * First bad tower of a pre-binned event, in input order, as one line of text; null when valid.
 * Looks at every tower before any threshold (spec section 1). `seen` is caller scratch of
 * towerTotal entries, all zero on entry and left all zero on return.
 */
export function findInvalidTower(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  seen: Uint8Array,
  allowDuplicates = false,
): string | null {
  const total = tables.towerTotal;
  let problem: string | null = null;
  let k = 0;
  for (; k < towerIndex.length; k++) {
    const index = towerIndex[k];
    const et = towerEt[k];
    if (!Number.isFinite(et)) { problem = `tower ${k} (index ${index}) has non-finite et ${et}`; break; }
    if (!Number.isInteger(index) || index < 0 || index >= total) {
      problem = `tower ${k} has index ${index} outside the grid of ${total} towers`;
      break;
    }
    if (Math.abs(et) > MAX_ABS_ET) { problem = `tower ${k} (index ${index}) has |et| ${et} above ${MAX_ABS_ET}`; break; }
    if (seen[index] && !allowDuplicates) { problem = `tower ${k} repeats index ${index}`; break; }
    seen[index] = 1;
  }
  for (let j = 0; j < k && j < towerIndex.length; j++) {
    const index = towerIndex[j];
    if (index >= 0 && index < total) seen[index] = 0;
  }
  return problem;
}

/** Brings an azimuth into [0, 2pi). */
export function wrapPhi(phi: number): number {
  let wrapped = phi % TWO_PI;
  if (wrapped < 0) wrapped += TWO_PI;
  if (wrapped >= TWO_PI) wrapped -= TWO_PI;
  return wrapped;
}

export interface BinnedDeposits {
  towerIndex: Int32Array;
  towerEt: Float64Array;
  outsideAcceptance: number;
  /** null when valid, else the first bad deposit in input order */
  problem: string | null;
}

/**
 * Bins raw deposits (eta, phi, et) onto the grid: deposits in one tower add, in input order.
 * Output towers are in increasing flat index. Non-finite values or |et| above 1e150 on any
 * deposit make the event invalid (checked on every deposit before anything is summed).
 */
export function binDeposits(tables: GridTables, eta: ArrayLike<number>, phi: ArrayLike<number>, et: ArrayLike<number>): BinnedDeposits {
  const { etaMin, etaMax, etaBins, phiBins } = tables.grid;
  const count = eta.length;
  if (phi.length !== count || et.length !== count) {
    return { towerIndex: new Int32Array(0), towerEt: new Float64Array(0), outsideAcceptance: 0,
      problem: `deposit arrays differ in length (eta ${count}, phi ${phi.length}, et ${et.length})` };
  }
  for (let k = 0; k < count; k++) {
    if (!Number.isFinite(eta[k]) || !Number.isFinite(phi[k]) || !Number.isFinite(et[k])) {
      return { towerIndex: new Int32Array(0), towerEt: new Float64Array(0), outsideAcceptance: 0,
        problem: `deposit ${k} has a non-finite value (eta ${eta[k]}, phi ${phi[k]}, et ${et[k]})` };
    }
    if (Math.abs(et[k]) > MAX_ABS_ET) {
      return { towerIndex: new Int32Array(0), towerEt: new Float64Array(0), outsideAcceptance: 0,
        problem: `deposit ${k} has |et| ${et[k]} above ${MAX_ABS_ET}` };
    }
  }
  const etaWidth = (etaMax - etaMin) / etaBins;
  const phiWidth = TWO_PI / phiBins;
  const sums = new Map<number, number>();
  let outside = 0;
  for (let k = 0; k < count; k++) {
    const e = eta[k];
    if (!(e >= etaMin && e < etaMax)) { outside++; continue; }
    let ieta = Math.floor((e - etaMin) / etaWidth);
    if (ieta >= etaBins) ieta = etaBins - 1; // rounding just below etaMax
    let iphi = Math.floor(wrapPhi(phi[k]) / phiWidth);
    if (iphi >= phiBins) iphi = phiBins - 1;
    const index = ieta * phiBins + iphi;
    sums.set(index, (sums.get(index) ?? 0) + et[k]);
  }
  const indices = Int32Array.from(sums.keys()).sort();
  const energies = new Float64Array(indices.length);
  for (let k = 0; k < indices.length; k++) energies[k] = sums.get(indices[k])!;
  return { towerIndex: indices, towerEt: energies, outsideAcceptance: outside, problem: null };
}

/**
 * The towers that enter clustering, in increasing flat index (their jet indices 0..N-1, spec
 * section 4). Drops et <= threshold and et < 1e-150. Input must already be valid.
 */
export function selectTowers(
  towerIndex: Int32Array,
  towerEt: Float64Array,
  threshold: number,
  counts?: TowerCounts,
): { towerIndex: Int32Array; towerEt: Float64Array } {
  const order: number[] = [];
  for (let k = 0; k < towerIndex.length; k++) {
    const et = towerEt[k];
    if (et > threshold && et >= MIN_ET) order.push(k);
  }
  order.sort((a, b) => towerIndex[a] - towerIndex[b]);
  const outIndex = new Int32Array(order.length);
  const outEt = new Float64Array(order.length);
  for (let k = 0; k < order.length; k++) {
    outIndex[k] = towerIndex[order[k]];
    outEt[k] = towerEt[order[k]];
  }
  if (counts) {
    counts.offered += towerIndex.length;
    counts.belowThreshold += towerIndex.length - order.length;
    counts.clustered += order.length;
  }
  return { towerIndex: outIndex, towerEt: outEt };
}
