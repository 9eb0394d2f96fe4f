// The brute-force clusterer, for tests only: at every step it evaluates every pair and every
// beam candidate of the live jets (O(N^3) overall) and takes the smallest in the order of
// clustering-spec.md section 4. It shares the small formula helpers with the reference but none
// of its nearest-neighbour bookkeeping, which is what the comparison is meant to check.

import { candidateBefore, deltaR2, weightOf, wrapAtan2, type ClusterStep } from '../../host/clustering/reference.js';
import type { GridTables } from '../../host/clustering/grid.js';
import type { ClusterSettings, JetSet } from '../../host/types.js';
import { allocateJetSet } from '../../host/clustering/jet-set.js';

const BEAM = Number.MAX_SAFE_INTEGER;

export interface BruteForceOptions {
  history?: ClusterStep[];
  /**
   * Use the plain geometric nearest neighbour (smallest dR2, ties to the smaller index) to
   * pick each jet's pair, as a fast engine might be tempted to. Not exact (spec section 4);
   * tests use it to show events where it goes wrong.
   */
  geometricShortcut?: boolean;
}

export function clusterBruteForce(
  tables: GridTables,
  towerIndex: Int32Array,
  towerEt: Float64Array,
  settings: ClusterSettings,
  options: BruteForceOptions = {},
): JetSet {
  const { p, radius } = settings;
  const invR2 = 1 / (radius * radius);
  const phiBins = tables.grid.phiBins;
  interface Jet { px: number; py: number; pz: number; e: number; kt2: number; y: number; phi: number; w: number; towers: number[] }
  const jets: (Jet | null)[] = [];
  for (let i = 0; i < towerIndex.length; i++) {
    const t = towerIndex[i];
    const ieta = Math.floor(t / phiBins);
    const iphi = t % phiBins;
    const et = towerEt[i];
    const kt2 = et * et;
    jets.push({
      px: et * tables.cosPhi[iphi], py: et * tables.sinPhi[iphi], pz: et * tables.sinhEta[ieta], e: et * tables.coshEta[ieta],
      kt2, y: tables.etaCentre[ieta], phi: tables.phiCentre[iphi], w: weightOf(kt2, p), towers: [t],
    });
  }
  const finals: number[] = [];
  const finalJets = new Map<number, Jet>();
  for (;;) {
    const live: number[] = [];
    jets.forEach((jet, i) => { if (jet) live.push(i); });
    if (live.length === 0) break;
    let best = { m: Infinity, a: -1, b: -1 };
    const offer = (m: number, a: number, b: number) => {
      if (best.a < 0 || candidateBefore(m, a, b, best.m, best.a, best.b)) best = { m, a, b };
    };
    for (const i of live) offer(jets[i]!.w, i, BEAM);
    if (options.geometricShortcut) {
      for (const i of live) {
        let nearest = -1;
        let nearestR2 = Infinity;
        for (const j of live) {
          if (j === i) continue;
          const r2 = deltaR2(jets[i]!.y, jets[i]!.phi, jets[j]!.y, jets[j]!.phi);
          if (r2 < nearestR2 || (r2 === nearestR2 && j < nearest)) { nearest = j; nearestR2 = r2; }
        }
        if (nearest >= 0) {
          const m = (Math.min(jets[i]!.w, jets[nearest]!.w) * nearestR2) * invR2;
          offer(m, Math.min(i, nearest), Math.max(i, nearest));
        }
      }
    } else {
      for (const i of live) {
        for (const j of live) {
          if (j <= i) continue;
          const a = jets[i]!;
          const b = jets[j]!;
          offer((Math.min(a.w, b.w) * deltaR2(a.y, a.phi, b.y, b.phi)) * invR2, i, j);
        }
      }
    }
    if (best.b === BEAM) {
      options.history?.push({ a: best.a, b: -1, measure: best.m });
      finals.push(best.a);
      // keep the jet for output, but take it out of the live set
      finalJets.set(best.a, jets[best.a]!);
      jets[best.a] = null;
      continue;
    }
    options.history?.push({ a: best.a, b: best.b, measure: best.m });
    const a = jets[best.a]!;
    const b = jets[best.b]!;
    let merged: Jet;
    if (settings.recombination === 'e') {
      const px = a.px + b.px, py = a.py + b.py, pz = a.pz + b.pz, e = a.e + b.e;
      const kt2 = px * px + py * py;
      merged = { px, py, pz, e, kt2, y: 0.5 * Math.log((e + pz) / (e - pz)), phi: wrapAtan2(Math.atan2(py, px)), w: weightOf(kt2, p), towers: [] };
    } else {
      const pt = Math.sqrt(a.kt2) + Math.sqrt(b.kt2);
      const harder = b.kt2 > a.kt2 ? b : a;
      const kt2 = pt * pt;
      merged = {
        px: pt * Math.cos(harder.phi), py: pt * Math.sin(harder.phi), pz: pt * Math.sinh(harder.y), e: pt * Math.cosh(harder.y),
        kt2, y: harder.y, phi: harder.phi, w: weightOf(kt2, p), towers: [],
      };
    }
    merged.towers = [...a.towers, ...b.towers].sort((x, z) => x - z);
    jets[best.a] = null;
    jets[best.b] = null;
    jets.push(merged);
  }
  function collect(): JetSet {
    const kept = finals
      .map((i) => ({ i, jet: finalJets.get(i)!, pt: Math.sqrt(finalJets.get(i)!.kt2) }))
      .filter((x) => x.pt >= settings.ptMin)
      .sort((x, z) => (x.pt !== z.pt ? (z.pt > x.pt ? 1 : -1) : x.i - z.i));
    const n = kept.length;
    const out = allocateJetSet(n);
    out.towers = new Int32Array(kept.reduce((s, x) => s + x.jet.towers.length, 0));
    let start = 0;
    kept.forEach(({ jet, pt }, k) => {
      out.px[k] = jet.px; out.py[k] = jet.py; out.pz[k] = jet.pz; out.energy[k] = jet.e; out.pt[k] = pt;
      out.rapidity[k] = jet.y; out.phi[k] = jet.phi;
      out.mass[k] = Math.sqrt(Math.max(0, jet.e * jet.e - jet.px * jet.px - jet.py * jet.py - jet.pz * jet.pz));
      out.towerCount[k] = jet.towers.length; out.towerStart[k] = start;
      out.towers.set(jet.towers, start);
      start += jet.towers.length;
    });
    return out;
  }
  return collect();
}

