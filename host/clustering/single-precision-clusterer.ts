// Single-precision emulation: the spec's sequence (clustering-spec.md sections 2-6) with every
// input and every arithmetic result rounded to single precision (emulate.ts says what it
// models). One algorithm, kept whole in one file: set-up, the merge loop, recombination and
// output share the same flat arrays and rounding, which is easier to check side by side.
//
// Data layout of the f32 clusterer (one set of flat arrays, grown to the largest event and
// reused): jet j (0 <= j < 2N-1) at index j of Float64Arrays px, py, pz, energy, kt2, y, phi,
// weight, each value a single-precision number held in a double; nearest[j] / nearestKey[j]
// its nearest neighbour under the spec's key ((w_j * dR2) * invR2, min, max), computed in
// single precision (the spec's exactness argument for this key only needs rounding to be
// monotone, which it is); active[0, activeCount) the live jets in no particular order (every
// choice goes through the total order of section 4, so order does not matter); parentA/B the
// merge tree; towerOf[j] the flat tower index of input jet j.

import { makeGridTables, selectTowers, type GridTables } from './grid.js';
import type { ClusterSettings, Clusterer, Grid, JetSet } from '../types.js';
import { allocateJetSet } from './jet-set.js';

const f = Math.fround;
const NONE = -1;
const BEAM = Number.MAX_SAFE_INTEGER;
const TWO_PI_F32 = f(2 * Math.PI);
const PI_F32 = f(Math.PI);

/** The spec's sequence with single-precision arithmetic throughout. */
export class SinglePrecisionClusterer implements Clusterer {
  readonly name = 'emulate-f32';
  readonly settings: ClusterSettings;
  withTowers = true;
  private readonly tables: GridTables;
  // per-grid tables rounded to single precision
  private readonly etaCentre: Float64Array;
  private readonly sinhEta: Float64Array;
  private readonly coshEta: Float64Array;
  private readonly phiCentre: Float64Array;
  private readonly cosPhi: Float64Array;
  private readonly sinPhi: Float64Array;
  private readonly invR2: number;

  private capacity = 0;
  private px = new Float64Array(0);
  private py = new Float64Array(0);
  private pz = new Float64Array(0);
  private energy = new Float64Array(0);
  private kt2 = new Float64Array(0);
  private y = new Float64Array(0);
  private phi = new Float64Array(0);
  private weight = new Float64Array(0);
  private nearest = new Int32Array(0);
  private nearestKey = new Float64Array(0);
  private parentA = new Int32Array(0);
  private parentB = new Int32Array(0);
  private constituents = new Int32Array(0);
  private towerOf = new Int32Array(0);
  private active = new Int32Array(0);
  private finals = new Int32Array(0);
  private stack = new Int32Array(0);

  constructor(grid: Grid, settings: ClusterSettings) {
    this.settings = { ...settings };
    this.tables = makeGridTables(grid);
    const round = (values: Float64Array) => values.map((v) => f(v));
    this.etaCentre = round(this.tables.etaCentre);
    this.sinhEta = round(this.tables.sinhEta);
    this.coshEta = round(this.tables.coshEta);
    this.phiCentre = round(this.tables.phiCentre);
    this.cosPhi = round(this.tables.cosPhi);
    this.sinPhi = round(this.tables.sinPhi);
    const radius = f(settings.radius);
    this.invR2 = f(1 / f(radius * radius));
  }

  private reserve(towerCount: number): void {
    const need = Math.max(1, 2 * towerCount - 1);
    if (need <= this.capacity) return;
    const size = Math.max(need, 2 * this.capacity);
    this.capacity = size;
    this.px = new Float64Array(size);
    this.py = new Float64Array(size);
    this.pz = new Float64Array(size);
    this.energy = new Float64Array(size);
    this.kt2 = new Float64Array(size);
    this.y = new Float64Array(size);
    this.phi = new Float64Array(size);
    this.weight = new Float64Array(size);
    this.nearest = new Int32Array(size);
    this.nearestKey = new Float64Array(size);
    this.parentA = new Int32Array(size);
    this.parentB = new Int32Array(size);
    this.constituents = new Int32Array(size);
    this.towerOf = new Int32Array(size);
    this.active = new Int32Array(size);
    this.finals = new Int32Array(size);
    this.stack = new Int32Array(size);
  }

  private weightOf(kt2: number): number {
    const p = this.settings.p;
    if (p === -1) return f(1 / kt2);
    if (p === 0) return 1;
    if (p === 1) return kt2;
    return f(Math.pow(kt2, f(p)));
  }

  /** single-precision dR2 with the spec's azimuth rule */
  private deltaR2(i: number, j: number): number {
    let dphi = Math.abs(f(this.phi[i] - this.phi[j]));
    if (dphi > PI_F32) dphi = f(TWO_PI_F32 - dphi);
    const dy = f(this.y[i] - this.y[j]);
    return f(f(dy * dy) + f(dphi * dphi));
  }

  private findNearest(i: number, activeCount: number): void {
    const active = this.active;
    const wi = this.weight[i];
    const invR2 = this.invR2;
    let best = NONE;
    let bestKey = Infinity;
    for (let n = 0; n < activeCount; n++) {
      const j = active[n];
      if (j === i) continue;
      const key = f(f(wi * this.deltaR2(i, j)) * invR2);
      if (best === NONE || before(key, Math.min(i, j), Math.max(i, j), bestKey, Math.min(i, best), Math.max(i, best))) {
        best = j;
        bestKey = key;
      }
    }
    this.nearest[i] = best;
    this.nearestKey[i] = bestKey;
  }

  cluster(towerIndex: Int32Array, towerEt: Float64Array): JetSet {
    const selected = selectTowers(towerIndex, towerEt, this.settings.threshold);
    const phiBins = this.tables.grid.phiBins;
    this.reserve(selected.towerIndex.length);
    const { px, py, pz, energy, kt2, y, phi, weight, nearest, nearestKey, parentA, parentB, constituents, towerOf, active, finals } = this;
    const invR2 = this.invR2;

    // towers -> single-precision four-vectors; towers whose kt2 leaves the single range drop
    let n = 0;
    for (let k = 0; k < selected.towerIndex.length; k++) {
      const t = selected.towerIndex[k];
      const et = f(selected.towerEt[k]);
      const square = f(et * et);
      const w = this.weightOf(square);
      if (!(square > 0 && square < Infinity && w > 0 && w < Infinity)) continue;
      const ieta = Math.floor(t / phiBins);
      const iphi = t - ieta * phiBins;
      px[n] = f(et * this.cosPhi[iphi]);
      py[n] = f(et * this.sinPhi[iphi]);
      pz[n] = f(et * this.sinhEta[ieta]);
      energy[n] = f(et * this.coshEta[ieta]);
      y[n] = this.etaCentre[ieta];
      phi[n] = this.phiCentre[iphi];
      kt2[n] = square;
      weight[n] = w;
      constituents[n] = 1;
      parentA[n] = NONE;
      parentB[n] = NONE;
      towerOf[n] = t;
      active[n] = n;
      n++;
    }
    const towerCount = n;
    let activeCount = towerCount;
    for (let k = 0; k < activeCount; k++) this.findNearest(active[k], activeCount);

    let finalCount = 0;
    let nextJet = towerCount;
    while (activeCount > 0) {
      let bestMeasure = Infinity;
      let bestA = NONE;
      let bestB = NONE;
      for (let k = 0; k < activeCount; k++) {
        const i = active[k];
        if (bestA === NONE || before(weight[i], i, BEAM, bestMeasure, bestA, bestB)) {
          bestMeasure = weight[i];
          bestA = i;
          bestB = BEAM;
        }
        const j = nearest[i];
        if (j !== NONE) {
          const measure = f(f(Math.min(weight[i], weight[j]) * this.deltaR2(i, j)) * invR2);
          const a = Math.min(i, j);
          const b = Math.max(i, j);
          if (before(measure, a, b, bestMeasure, bestA, bestB)) {
            bestMeasure = measure;
            bestA = a;
            bestB = b;
          }
        }
      }

      if (bestB === BEAM) {
        finals[finalCount++] = bestA;
        activeCount = removeActive(active, activeCount, bestA);
        for (let k = 0; k < activeCount; k++) if (nearest[active[k]] === bestA) this.findNearest(active[k], activeCount);
        continue;
      }

      const jet = nextJet++;
      this.recombine(bestA, bestB, jet);
      parentA[jet] = bestA;
      parentB[jet] = bestB;
      constituents[jet] = constituents[bestA] + constituents[bestB];
      activeCount = removeActive(active, activeCount, bestA);
      activeCount = removeActive(active, activeCount, bestB);
      active[activeCount++] = jet;
      this.findNearest(jet, activeCount);
      for (let k = 0; k < activeCount; k++) {
        const j = active[k];
        if (j === jet) continue;
        if (nearest[j] === bestA || nearest[j] === bestB) {
          this.findNearest(j, activeCount);
          continue;
        }
        const key = f(f(weight[j] * this.deltaR2(j, jet)) * invR2);
        const current = nearest[j];
        if (current === NONE || before(key, j, jet, nearestKey[j], Math.min(j, current), Math.max(j, current))) {
          nearest[j] = jet;
          nearestKey[j] = key;
        }
      }
    }
    return this.output(finalCount, towerCount);
  }

  private recombine(a: number, b: number, k: number): void {
    const { px, py, pz, energy, kt2, y, phi } = this;
    if (this.settings.recombination === 'e') {
      px[k] = f(px[a] + px[b]);
      py[k] = f(py[a] + py[b]);
      pz[k] = f(pz[a] + pz[b]);
      energy[k] = f(energy[a] + energy[b]);
      kt2[k] = f(f(px[k] * px[k]) + f(py[k] * py[k]));
      y[k] = f(0.5 * f(Math.log(f(f(energy[k] + pz[k]) / f(energy[k] - pz[k])))));
      phi[k] = wrapF32(f(Math.atan2(py[k], px[k])));
    } else {
      const pt = f(f(Math.sqrt(kt2[a])) + f(Math.sqrt(kt2[b])));
      const harder = kt2[b] > kt2[a] ? b : a;
      y[k] = y[harder];
      phi[k] = phi[harder];
      kt2[k] = f(pt * pt);
      px[k] = f(pt * f(Math.cos(phi[k])));
      py[k] = f(pt * f(Math.sin(phi[k])));
      pz[k] = f(pt * f(Math.sinh(y[k])));
      energy[k] = f(pt * f(Math.cosh(y[k])));
    }
    this.weight[k] = this.weightOf(kt2[k]);
  }

  /** final jets with pt >= ptMin in decreasing pt, ties to the smaller index (spec section 6) */
  private output(finalCount: number, towerCount: number): JetSet {
    const { px, py, pz, energy, kt2, y, phi, constituents, finals } = this;
    const ptMin = this.settings.ptMin;
    // keep the jets above ptMin at the front of finals, then sort them (few jets: insertion)
    let count = 0;
    for (let k = 0; k < finalCount; k++) {
      const j = finals[k];
      if (f(Math.sqrt(kt2[j])) >= ptMin) finals[count++] = j;
    }
    for (let k = 1; k < count; k++) {
      const j = finals[k];
      const ptJ = f(Math.sqrt(kt2[j]));
      let m = k;
      while (m > 0) {
        const prev = finals[m - 1];
        const ptPrev = f(Math.sqrt(kt2[prev]));
        if (ptPrev > ptJ || (ptPrev === ptJ && prev < j)) break;
        finals[m] = prev;
        m--;
      }
      finals[m] = j;
    }
    const jets = allocateJetSet(count);
    let towerTotal = 0;
    for (let k = 0; k < count; k++) {
      const j = finals[k];
      jets.px[k] = px[j];
      jets.py[k] = py[j];
      jets.pz[k] = pz[j];
      jets.energy[k] = energy[j];
      jets.pt[k] = f(Math.sqrt(kt2[j]));
      jets.rapidity[k] = y[j];
      jets.phi[k] = phi[j];
      const massSquared = f(f(f(f(energy[j] * energy[j]) - f(px[j] * px[j])) - f(py[j] * py[j])) - f(pz[j] * pz[j]));
      jets.mass[k] = f(Math.sqrt(Math.max(0, massSquared)));
      jets.towerCount[k] = constituents[j];
      jets.towerStart[k] = towerTotal;
      towerTotal += constituents[j];
    }
    if (this.withTowers) {
      jets.towers = new Int32Array(towerTotal);
      const stack = this.stack;
      for (let k = 0; k < count; k++) {
        const start = jets.towerStart[k];
        let filled = 0;
        let top = 0;
        stack[top++] = finals[k];
        while (top > 0) {
          const j = stack[--top];
          if (j < towerCount) jets.towers[start + filled++] = this.towerOf[j];
          else {
            stack[top++] = this.parentA[j];
            stack[top++] = this.parentB[j];
          }
        }
        jets.towers.subarray(start, start + filled).sort();
      }
    }
    return jets;
  }
}

/** true when candidate (m1, a1, b1) comes before (m2, a2, b2) in the order of spec section 4 */
function before(m1: number, a1: number, b1: number, m2: number, a2: number, b2: number): boolean {
  if (m1 !== m2) return m1 < m2;
  if (a1 !== a2) return a1 < a2;
  return b1 < b2;
}

/** the spec's two wrap tests (section 5) in single precision */
function wrapF32(value: number): number {
  if (value < 0) value = f(value + TWO_PI_F32);
  if (value >= TWO_PI_F32) value = f(value - TWO_PI_F32);
  return value;
}

/** swap-remove of jet from active[0, count); returns the new count */
function removeActive(active: Int32Array, count: number, jet: number): number {
  for (let k = 0; k < count; k++) {
    if (active[k] === jet) {
      active[k] = active[count - 1];
      return count - 1;
    }
  }
  return count;
}
