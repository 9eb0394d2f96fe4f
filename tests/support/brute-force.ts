// The brute-force clusterer, for tests only, written from clustering-spec.md sections 1-6 and
// sharing no code with the clusterers it checks (an oracle must not repeat their mistakes): at
// every step it evaluates every pair and every beam candidate of the live jets (O(N^3) overall)
// and takes the smallest in the order of section 4.
//
// `round` is applied to every input and after every arithmetic operation. The identity gives
// the spec's double-precision sequence (the reference and the engine); Math.fround gives the
// same sequence in single precision (the precision emulation: Math functions evaluated in
// double on single inputs, their results rounded, as a correctly rounded float library would).

import type { ClusterSettings, Grid, JetSet } from '../../host/types.js';

export type Rounding = (value: number) => number;
export const DOUBLE_PRECISION: Rounding = (value) => value;
export const SINGLE_PRECISION: Rounding = Math.fround;

/** One step of the sequence: a merge of jets a < b, or a jet's beam taken (it becomes final). */
export type BruteForceStep =
  | { kind: 'merge'; a: number; b: number; measure: number }
  | { kind: 'beam'; jet: number; measure: number };

export interface BruteForceOptions {
  /** default: double precision */
  round?: Rounding;
  /** filled with every step, in order */
  history?: BruteForceStep[];
  /**
   * Use the plain geometric nearest neighbour (smallest dR2, ties to the smaller index) to
   * pick each jet's pair, as a fast engine might be tempted to. Not exact (spec section 4);
   * tests use it to show events where it goes wrong.
   */
  geometricShortcut?: boolean;
  /** no beam candidates: only pairs compete, down to a single jet (spec section 12, soft drop) */
  pairsOnly?: boolean;
}

/** the beam counts as larger than every jet index (section 4) */
const BEAM = Number.MAX_SAFE_INTEGER;
/** section 1: smaller towers are dropped, their measures would overflow */
const SMALLEST_ET = 1e-150;

interface Jet { px: number; py: number; pz: number; e: number; kt2: number; y: number; phi: number; w: number; towers: number[] }
interface Candidate { measure: number; a: number; b: number }

/** section 4's total order: measure, then the smaller index, then the larger */
function comesBefore(x: Candidate, y: Candidate): boolean {
  if (x.measure !== y.measure) return x.measure < y.measure;
  return x.a !== y.a ? x.a < y.a : x.b < y.b;
}

/**
 * Clusters one event's towers (any order, before the threshold) and returns the final jets in
 * section 6's output order.
 */
export function clusterBruteForce(
  grid: Grid,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  settings: ClusterSettings,
  options: BruteForceOptions = {},
): JetSet {
  const r = options.round ?? DOUBLE_PRECISION;
  const p = settings.p;
  const twoPi = r(2 * Math.PI);
  const pi = r(Math.PI);
  const radius = r(settings.radius);
  const invR2 = r(1 / r(radius * radius));
  const weight = (kt2: number) => (p === -1 ? r(1 / kt2) : p === 0 ? 1 : p === 1 ? kt2 : r(Math.pow(kt2, r(p))));
  const deltaR2 = (a: Jet, b: Jet) => {
    let dphi = Math.abs(r(a.phi - b.phi));
    if (dphi > pi) dphi = r(twoPi - dphi);
    const dy = r(a.y - b.y);
    return r(r(dy * dy) + r(dphi * dphi));
  };

  // section 1: threshold, then increasing flat tower index; section 2: towers to four-vectors
  const order = [...towerIndex.keys()]
    .filter((k) => towerEt[k] > settings.threshold && towerEt[k] >= SMALLEST_ET)
    .sort((k1, k2) => towerIndex[k1] - towerIndex[k2]);
  const jets: (Jet | null)[] = [];
  for (const k of order) {
    const t = towerIndex[k];
    const ieta = Math.floor(t / grid.phiBins);
    const iphi = t % grid.phiBins;
    const etaCentre = grid.etaMin + (ieta + 0.5) * ((grid.etaMax - grid.etaMin) / grid.etaBins);
    const phiCentre = (iphi + 0.5) * ((2 * Math.PI) / grid.phiBins);
    const et = r(towerEt[k]);
    const kt2 = r(et * et);
    jets.push({
      px: r(et * r(Math.cos(phiCentre))), py: r(et * r(Math.sin(phiCentre))),
      pz: r(et * r(Math.sinh(etaCentre))), e: r(et * r(Math.cosh(etaCentre))),
      kt2, y: r(etaCentre), phi: r(phiCentre), w: weight(kt2), towers: [t],
    });
  }

  // section 4: the sequence
  const finals: number[] = [];
  const finalJets: Jet[] = [];
  for (;;) {
    const live = jets.flatMap((jet, i) => (jet ? [i] : []));
    if (live.length === 0) break;
    if (options.pairsOnly && live.length === 1) {
      finals.push(live[0]);
      finalJets.push(jets[live[0]]!);
      break;
    }
    let best: Candidate | null = null;
    const offer = (measure: number, a: number, b: number) => {
      const candidate = { measure, a, b };
      if (best === null || comesBefore(candidate, best)) best = candidate;
    };
    if (!options.pairsOnly) for (const i of live) offer(jets[i]!.w, i, BEAM);
    if (options.geometricShortcut) {
      for (const i of live) {
        let nearest = -1;
        let nearestR2 = Infinity;
        for (const j of live) {
          if (j === i) continue;
          const dR2 = deltaR2(jets[i]!, jets[j]!);
          if (dR2 < nearestR2 || (dR2 === nearestR2 && j < nearest)) { nearest = j; nearestR2 = dR2; }
        }
        if (nearest >= 0) offer(r(r(Math.min(jets[i]!.w, jets[nearest]!.w) * nearestR2) * invR2), Math.min(i, nearest), Math.max(i, nearest));
      }
    } else {
      for (const i of live) {
        for (const j of live) {
          if (j > i) offer(r(r(Math.min(jets[i]!.w, jets[j]!.w) * deltaR2(jets[i]!, jets[j]!)) * invR2), i, j);
        }
      }
    }
    const chosen: Candidate = best!;
    if (chosen.b === BEAM) {
      options.history?.push({ kind: 'beam', jet: chosen.a, measure: chosen.measure });
      finals.push(chosen.a);
      finalJets.push(jets[chosen.a]!);
      jets[chosen.a] = null;
      continue;
    }
    options.history?.push({ kind: 'merge', a: chosen.a, b: chosen.b, measure: chosen.measure });
    const a = jets[chosen.a]!;
    const b = jets[chosen.b]!;
    const merged = settings.recombination === 'e' ? addFourVectors(a, b, r, twoPi) : winnerTakesAll(a, b, r);
    merged.w = weight(merged.kt2);
    merged.towers = [...a.towers, ...b.towers].sort((t1, t2) => t1 - t2);
    jets[chosen.a] = null;
    jets[chosen.b] = null;
    jets.push(merged);
  }
  return outputOf(finals, finalJets, settings.ptMin, r);
}

/** section 5, E-scheme */
function addFourVectors(a: Jet, b: Jet, r: Rounding, twoPi: number): Jet {
  const px = r(a.px + b.px), py = r(a.py + b.py), pz = r(a.pz + b.pz), e = r(a.e + b.e);
  const kt2 = r(r(px * px) + r(py * py));
  const y = r(0.5 * r(Math.log(r(r(e + pz) / r(e - pz)))));
  let phi = r(Math.atan2(py, px));
  if (phi < 0) phi = r(phi + twoPi);
  if (phi >= twoPi) phi = r(phi - twoPi);
  return { px, py, pz, e, kt2, y, phi, w: 0, towers: [] };
}

/** section 5, winner-take-all; `a` has the smaller index, so it wins ties */
function winnerTakesAll(a: Jet, b: Jet, r: Rounding): Jet {
  const pt = r(r(Math.sqrt(a.kt2)) + r(Math.sqrt(b.kt2)));
  const harder = b.kt2 > a.kt2 ? b : a;
  return {
    px: r(pt * r(Math.cos(harder.phi))), py: r(pt * r(Math.sin(harder.phi))),
    pz: r(pt * r(Math.sinh(harder.y))), e: r(pt * r(Math.cosh(harder.y))),
    kt2: r(pt * pt), y: harder.y, phi: harder.phi, w: 0, towers: [],
  };
}

/** section 6: jets with pt >= ptMin, decreasing pt, ties to the smaller index */
function outputOf(finals: number[], finalJets: Jet[], ptMin: number, r: Rounding): JetSet {
  const kept = finalJets
    .map((jet, n) => ({ jet, index: finals[n], pt: r(Math.sqrt(jet.kt2)) }))
    .filter((x) => x.pt >= ptMin)
    .sort((x, z) => (x.pt !== z.pt ? (z.pt > x.pt ? 1 : -1) : x.index - z.index));
  const count = kept.length;
  const column = () => new Float64Array(count);
  const out: JetSet = {
    count, px: column(), py: column(), pz: column(), energy: column(), pt: column(), rapidity: column(), phi: column(), mass: column(),
    towerCount: new Int32Array(count), towerStart: new Int32Array(count),
    towers: new Int32Array(kept.reduce((sum, x) => sum + x.jet.towers.length, 0)),
  };
  let start = 0;
  kept.forEach(({ jet, pt }, k) => {
    out.px[k] = jet.px; out.py[k] = jet.py; out.pz[k] = jet.pz; out.energy[k] = jet.e; out.pt[k] = pt;
    out.rapidity[k] = jet.y; out.phi[k] = jet.phi;
    const mass2 = r(r(r(r(jet.e * jet.e) - r(jet.px * jet.px)) - r(jet.py * jet.py)) - r(jet.pz * jet.pz));
    out.mass[k] = r(Math.sqrt(Math.max(0, mass2)));
    out.towerCount[k] = jet.towers.length;
    out.towerStart[k] = start;
    out.towers.set(jet.towers, start);
    start += jet.towers.length;
  });
  return out;
}
