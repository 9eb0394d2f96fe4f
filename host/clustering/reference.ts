// Over 300 lines on purpose: one algorithm, clusterReference, kept whole so it reads top to bottom against the spec.
// The reference clusterer: plain TypeScript written to be read and trusted, following
// clustering-spec.md to the letter. It is the yardstick every fast engine is compared against,
// so clarity beats speed here; it is still the nearest-neighbour form, O(N^2) overall.
//
// Data layout: jet j (0 <= j < 2N-1) lives at index j of flat Float64Arrays px, py, pz, E,
// kt2, y, phi, weight. Towers that survive the threshold are jets 0..N-1 in increasing flat
// tower index; the k-th merge makes jet N+k (spec section 4). `active` lists the live jets.
// Every live jet i keeps its nearest neighbour nearest[i] under the spec's key
//   ((weight_i * dR2_ij) * invR2, min(i, j), max(i, j))
// and nearestKey[i] holds the first component of that key.

import { makeGridTables, selectTowers, type GridTables } from './grid.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';
import { allocateJetSet } from './jet-set.js';

const TWO_PI = 2 * Math.PI;
/** the beam B in tie-breaks: larger than every jet index */
const BEAM = Number.MAX_SAFE_INTEGER;
const NONE = -1;

/** generalised-kt weight of a jet with squared transverse momentum kt2 (spec section 3) */
export function weightOf(kt2: number, p: number): number {
  if (p === -1) return 1 / kt2;
  if (p === 0) return 1;
  if (p === 1) return kt2;
  return Math.pow(kt2, p);
}

/** squared distance in (y, phi) with the azimuth taken the short way round (spec section 3) */
export function deltaR2(yA: number, phiA: number, yB: number, phiB: number): number {
  let dphi = Math.abs(phiA - phiB);
  if (dphi > Math.PI) dphi = TWO_PI - dphi;
  const dy = yA - yB;
  return dy * dy + dphi * dphi;
}

/** true when candidate (m1, a1, b1) comes before (m2, a2, b2) in the order of spec section 4 */
export function candidateBefore(m1: number, a1: number, b1: number, m2: number, a2: number, b2: number): boolean {
  if (m1 !== m2) return m1 < m2;
  if (a1 !== a2) return a1 < a2;
  return b1 < b2;
}

/** Brings atan2's result into [0, 2pi) as two separate tests, in the spec's order (section 5). */
export function wrapAtan2(phi: number): number {
  if (phi < 0) phi = phi + TWO_PI;
  if (phi >= TWO_PI) phi = phi - TWO_PI;
  return phi;
}

/**
 * One step of the sequence (spec section 4), for tests and diagnostics: jets a < b merged into
 * the next jet, or a jet's beam candidate taken (the jet becomes final). `measure` is the chosen
 * candidate's measure.
 */
export type ClusterStep =
  | { kind: 'merge'; a: number; b: number; measure: number }
  | { kind: 'beam'; jet: number; measure: number };

export interface ReferenceOptions {
  /** report each jet's constituent tower indices (default true) */
  withTowers?: boolean;
  /** when given, every step of the sequence is appended */
  history?: ClusterStep[];
  /** when given, receives each reported jet's index in the sequence (spec section 4), in output order */
  jetIndex?: number[];
  /** no beam candidates: only pairs compete, down to a single jet (spec section 12, soft drop) */
  pairsOnly?: boolean;
  /** when given, receives every jet of the sequence, towers and merges (the merging tree) */
  tree?: ClusterTree;
}

/**
 * Every jet of one clustering sequence by its index (spec section 4): the four-vector, kt2, y and
 * phi as the sequence carries them, the two jets a merge made it from (parentA < parentB, -1 for
 * a tower) and its number of towers. `jetCount` jets, towers first.
 */
export interface ClusterTree {
  jetCount: number;
  px: Float64Array;
  py: Float64Array;
  pz: Float64Array;
  energy: Float64Array;
  kt2: Float64Array;
  y: Float64Array;
  phi: Float64Array;
  parentA: Int32Array;
  parentB: Int32Array;
  towerCount: Int32Array;
}

/**
 * Clusters one event's selected towers (increasing flat index, all above threshold: the output
 * of grid.ts selectTowers). Returns the final jets in the spec's output order.
 */
export function clusterReference(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  settings: ClusterSettings,
  options: ReferenceOptions = {},
): JetSet {
  const withTowers = options.withTowers ?? true;
  const history = options.history;
  const pairsOnly = options.pairsOnly ?? false;
  const { p, radius, recombination } = settings;
  const phiBins = tables.grid.phiBins;
  const towerCount = towerIndex.length;
  const capacity = Math.max(1, 2 * towerCount - 1);

  const px = new Float64Array(capacity);
  const py = new Float64Array(capacity);
  const pz = new Float64Array(capacity);
  const energy = new Float64Array(capacity);
  const kt2 = new Float64Array(capacity);
  const y = new Float64Array(capacity);
  const phi = new Float64Array(capacity);
  const weight = new Float64Array(capacity);
  const nearest = new Int32Array(capacity).fill(NONE);
  const nearestKey = new Float64Array(capacity);
  // merge tree, to collect constituents at the end
  const parentA = new Int32Array(capacity).fill(NONE);
  const parentB = new Int32Array(capacity).fill(NONE);
  const constituents = new Int32Array(capacity);

  const invR2 = 1 / (radius * radius);

  // towers -> massless four-vectors pointing at their centres (spec section 2)
  for (let i = 0; i < towerCount; i++) {
    const t = towerIndex[i];
    const ieta = Math.floor(t / phiBins);
    const iphi = t - ieta * phiBins;
    const et = towerEt[i];
    px[i] = et * tables.cosPhi[iphi];
    py[i] = et * tables.sinPhi[iphi];
    pz[i] = et * tables.sinhEta[ieta];
    energy[i] = et * tables.coshEta[ieta];
    y[i] = tables.etaCentre[ieta];
    phi[i] = tables.phiCentre[iphi];
    kt2[i] = et * et;
    weight[i] = weightOf(kt2[i], p);
    constituents[i] = 1;
  }

  const active: number[] = [];
  for (let i = 0; i < towerCount; i++) active.push(i);

  /** the key of j as i's neighbour; returns its measure part */
  const keyMeasure = (i: number, j: number): number =>
    (weight[i] * deltaR2(y[i], phi[i], y[j], phi[j])) * invR2;

  /** full search of i's nearest neighbour among the live jets */
  const findNearest = (i: number): void => {
    let best = NONE;
    let bestKey = Infinity;
    for (const j of active) {
      if (j === i) continue;
      const key = keyMeasure(i, j);
      if (best === NONE || candidateBefore(key, Math.min(i, j), Math.max(i, j), bestKey, Math.min(i, best), Math.max(i, best))) {
        best = j;
        bestKey = key;
      }
    }
    nearest[i] = best;
    nearestKey[i] = bestKey;
  };

  for (const i of active) findNearest(i);

  const finals: number[] = [];
  let nextJet = towerCount;

  while (active.length > 0) {
    if (pairsOnly && active.length === 1) {
      finals.push(active.pop()!);
      break;
    }
    // the smallest candidate: each jet offers its beam and its pair with its nearest neighbour
    let bestMeasure = Infinity;
    let bestA = NONE;
    let bestB = NONE;
    for (const i of active) {
      if (!pairsOnly && (bestA === NONE || candidateBefore(weight[i], i, BEAM, bestMeasure, bestA, bestB))) {
        bestMeasure = weight[i];
        bestA = i;
        bestB = BEAM;
      }
      const j = nearest[i];
      if (j !== NONE) {
        const measure = (Math.min(weight[i], weight[j]) * deltaR2(y[i], phi[i], y[j], phi[j])) * invR2;
        const a = Math.min(i, j);
        const b = Math.max(i, j);
        if (bestA === NONE || candidateBefore(measure, a, b, bestMeasure, bestA, bestB)) {
          bestMeasure = measure;
          bestA = a;
          bestB = b;
        }
      }
    }

    if (bestB === BEAM) {
      history?.push({ kind: 'beam', jet: bestA, measure: bestMeasure });
      finals.push(bestA);
      active.splice(active.indexOf(bestA), 1);
      for (const j of active) if (nearest[j] === bestA) findNearest(j);
      continue;
    }

    history?.push({ kind: 'merge', a: bestA, b: bestB, measure: bestMeasure });
    const k = nextJet++;
    recombine(bestA, bestB, k);
    parentA[k] = bestA;
    parentB[k] = bestB;
    constituents[k] = constituents[bestA] + constituents[bestB];
    active.splice(active.indexOf(bestA), 1);
    active.splice(active.indexOf(bestB), 1);
    active.push(k);
    findNearest(k);
    for (const j of active) {
      if (j === k) continue;
      if (nearest[j] === bestA || nearest[j] === bestB) {
        findNearest(j);
        continue;
      }
      // k is the largest index, so the key (measure, j, k) loses every tie on the first index
      // only against neighbours with a smaller first index; candidateBefore says exactly that.
      const key = keyMeasure(j, k);
      const current = nearest[j];
      if (current === NONE || candidateBefore(key, j, k, nearestKey[j], Math.min(j, current), Math.max(j, current))) {
        nearest[j] = k;
        nearestKey[j] = key;
      }
    }
  }

  function recombine(a: number, b: number, k: number): void {
    if (recombination === 'e') {
      px[k] = px[a] + px[b];
      py[k] = py[a] + py[b];
      pz[k] = pz[a] + pz[b];
      energy[k] = energy[a] + energy[b];
      kt2[k] = px[k] * px[k] + py[k] * py[k];
      y[k] = 0.5 * Math.log((energy[k] + pz[k]) / (energy[k] - pz[k]));
      phi[k] = wrapAtan2(Math.atan2(py[k], px[k]));
    } else {
      const pt = Math.sqrt(kt2[a]) + Math.sqrt(kt2[b]);
      // the harder of the two: larger kt2, ties to the smaller index (a < b)
      const harder = kt2[b] > kt2[a] ? b : a;
      y[k] = y[harder];
      phi[k] = phi[harder];
      kt2[k] = pt * pt;
      px[k] = pt * Math.cos(phi[k]);
      py[k] = pt * Math.sin(phi[k]);
      pz[k] = pt * Math.sinh(y[k]);
      energy[k] = pt * Math.cosh(y[k]);
    }
    weight[k] = weightOf(kt2[k], p);
  }

  if (options.tree) {
    Object.assign(options.tree, { jetCount: nextJet, px, py, pz, energy, kt2, y, phi, parentA, parentB, towerCount: constituents });
  }

  // output: pt >= ptMin, decreasing pt, ties to the smaller index (spec section 6)
  const kept: number[] = [];
  const ptOf = new Map<number, number>();
  for (const j of finals) {
    const pt = Math.sqrt(kt2[j]);
    if (pt >= settings.ptMin) {
      kept.push(j);
      ptOf.set(j, pt);
    }
  }
  kept.sort((a, b) => {
    const pa = ptOf.get(a)!;
    const pb = ptOf.get(b)!;
    if (pa !== pb) return pb > pa ? 1 : -1;
    return a - b;
  });

  const count = kept.length;
  const jets = allocateJetSet(count);
  let towerTotal = 0;
  for (let n = 0; n < count; n++) {
    const j = kept[n];
    options.jetIndex?.push(j);
    jets.px[n] = px[j];
    jets.py[n] = py[j];
    jets.pz[n] = pz[j];
    jets.energy[n] = energy[j];
    jets.pt[n] = ptOf.get(j)!;
    jets.rapidity[n] = y[j];
    jets.phi[n] = phi[j];
    jets.mass[n] = Math.sqrt(Math.max(0, energy[j] * energy[j] - px[j] * px[j] - py[j] * py[j] - pz[j] * pz[j]));
    jets.towerCount[n] = constituents[j];
    jets.towerStart[n] = towerTotal;
    towerTotal += constituents[j];
  }
  if (withTowers) {
    jets.towers = new Int32Array(towerTotal);
    for (let n = 0; n < count; n++) {
      const collected: number[] = [];
      const stack = [kept[n]];
      while (stack.length > 0) {
        const j = stack.pop()!;
        if (j < towerCount) collected.push(towerIndex[j]);
        else stack.push(parentA[j], parentB[j]);
      }
      collected.sort((a, b) => a - b);
      jets.towers.set(collected, jets.towerStart[n]);
    }
  }
  return jets;
}

/** The reference behind the common Clusterer interface: threshold, ordering, then clustering. */
export class ReferenceClusterer implements Clusterer {
  readonly name = 'reference';
  readonly settings: ClusterSettings;
  readonly tables: GridTables;
  withTowers = true;

  constructor(grid: Grid, settings: ClusterSettings) {
    this.settings = { ...settings };
    this.tables = makeGridTables(grid);
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const selected = selectTowers(towerIndex, towerEt, this.settings.threshold);
    return clusterReference(this.tables, selected.towerIndex, selected.towerEt, this.settings, { withTowers: this.withTowers });
  }
}
