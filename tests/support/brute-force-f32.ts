// A brute-force single-precision clusterer, for tests only: every step evaluates every pair and
// beam of the live jets with Math.fround after each operation, and takes the smallest in the
// order of clustering-spec.md section 4. None of the emulation's nearest-neighbour bookkeeping
// is shared, which is what the comparison checks.

import type { GridTables } from '../../host/clustering/grid.js';
import type { ClusterSettings, JetSet } from '../../host/types.js';
import { allocateJetSet } from '../../host/clustering/jet-set.js';

const f = Math.fround;
const BEAM = Number.MAX_SAFE_INTEGER;

export function clusterBruteForceF32(tables: GridTables, towerIndex: Int32Array, towerEt: Float64Array, settings: ClusterSettings): JetSet {
  const twoPi = f(2 * Math.PI);
  const pi = f(Math.PI);
  const invR2 = f(1 / f(f(settings.radius) * f(settings.radius)));
  const weight = (kt2: number) => (settings.p === -1 ? f(1 / kt2) : settings.p === 0 ? 1 : settings.p === 1 ? kt2 : f(Math.pow(kt2, f(settings.p))));
  interface Jet { px: number; py: number; pz: number; e: number; kt2: number; y: number; phi: number; w: number; towers: number[] }
  const jets: (Jet | null)[] = [];
  const order = [...towerIndex.keys()].filter((k) => towerEt[k] > settings.threshold).sort((a, b) => towerIndex[a] - towerIndex[b]);
  for (const k of order) {
    const t = towerIndex[k];
    const ieta = Math.floor(t / tables.grid.phiBins);
    const iphi = t % tables.grid.phiBins;
    const et = f(towerEt[k]);
    const kt2 = f(et * et);
    jets.push({
      px: f(et * f(tables.cosPhi[iphi])), py: f(et * f(tables.sinPhi[iphi])), pz: f(et * f(tables.sinhEta[ieta])), e: f(et * f(tables.coshEta[ieta])),
      kt2, y: f(tables.etaCentre[ieta]), phi: f(tables.phiCentre[iphi]), w: weight(kt2), towers: [t],
    });
  }
  const dR2 = (a: Jet, b: Jet) => {
    let dphi = Math.abs(f(a.phi - b.phi));
    if (dphi > pi) dphi = f(twoPi - dphi);
    const dy = f(a.y - b.y);
    return f(f(dy * dy) + f(dphi * dphi));
  };
  const before = (m1: number, a1: number, b1: number, m2: number, a2: number, b2: number) => (m1 !== m2 ? m1 < m2 : a1 !== a2 ? a1 < a2 : b1 < b2);
  const finals: { index: number; jet: Jet }[] = [];
  for (;;) {
    const live = jets.flatMap((jet, i) => (jet ? [i] : []));
    if (live.length === 0) break;
    let best = { m: Infinity, a: -1, b: -1 };
    for (const i of live) if (best.a < 0 || before(jets[i]!.w, i, BEAM, best.m, best.a, best.b)) best = { m: jets[i]!.w, a: i, b: BEAM };
    for (const i of live) for (const j of live) {
      if (j <= i) continue;
      const m = f(f(Math.min(jets[i]!.w, jets[j]!.w) * dR2(jets[i]!, jets[j]!)) * invR2);
      if (before(m, i, j, best.m, best.a, best.b)) best = { m, a: i, b: j };
    }
    if (best.b === BEAM) {
      finals.push({ index: best.a, jet: jets[best.a]! });
      jets[best.a] = null;
      continue;
    }
    const a = jets[best.a]!;
    const b = jets[best.b]!;
    let merged: Jet;
    if (settings.recombination === 'e') {
      const px = f(a.px + b.px), py = f(a.py + b.py), pz = f(a.pz + b.pz), e = f(a.e + b.e);
      const kt2 = f(f(px * px) + f(py * py));
      let phi = f(Math.atan2(py, px));
      if (phi < 0) phi = f(phi + twoPi);
      if (phi >= twoPi) phi = f(phi - twoPi);
      merged = { px, py, pz, e, kt2, y: f(0.5 * f(Math.log(f(f(e + pz) / f(e - pz))))), phi, w: weight(kt2), towers: [] };
    } else {
      const pt = f(f(Math.sqrt(a.kt2)) + f(Math.sqrt(b.kt2)));
      const harder = b.kt2 > a.kt2 ? b : a;
      const kt2 = f(pt * pt);
      merged = {
        px: f(pt * f(Math.cos(harder.phi))), py: f(pt * f(Math.sin(harder.phi))), pz: f(pt * f(Math.sinh(harder.y))), e: f(pt * f(Math.cosh(harder.y))),
        kt2, y: harder.y, phi: harder.phi, w: weight(kt2), towers: [],
      };
    }
    merged.towers = [...a.towers, ...b.towers].sort((x, z) => x - z);
    jets[best.a] = null;
    jets[best.b] = null;
    jets.push(merged);
  }
  const kept = finals
    .map((x) => ({ ...x, pt: f(Math.sqrt(x.jet.kt2)) }))
    .filter((x) => x.pt >= settings.ptMin)
    .sort((x, z) => (x.pt !== z.pt ? (z.pt > x.pt ? 1 : -1) : x.index - z.index));
  const n = kept.length;
  const out = allocateJetSet(n);
  out.towers = new Int32Array(kept.reduce((s, x) => s + x.jet.towers.length, 0));
  let start = 0;
  kept.forEach(({ jet, pt }, k) => {
    out.px[k] = jet.px; out.py[k] = jet.py; out.pz[k] = jet.pz; out.energy[k] = jet.e; out.pt[k] = pt;
    out.rapidity[k] = jet.y; out.phi[k] = jet.phi;
    const m2 = f(f(f(f(jet.e * jet.e) - f(jet.px * jet.px)) - f(jet.py * jet.py)) - f(jet.pz * jet.pz));
    out.mass[k] = f(Math.sqrt(Math.max(0, m2)));
    out.towerCount[k] = jet.towers.length; out.towerStart[k] = start;
    out.towers.set(jet.towers, start);
    start += jet.towers.length;
  });
  return out;
}
