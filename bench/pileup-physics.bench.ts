// How much of the pileup the chain removes, from the toy generator's own truth (its pileup is a
// toy: soft deposits spread uniformly over the grid, nothing like real minimum-bias physics; the
// events are invented, fictional Halden ring). Truth jets are anti-kt R = 0.4 on the hard jets'
// deposits alone (host/generator/generate.ts generateEventsWithTruth), pt >= 30 GeV. Each truth
// jet is matched to the nearest reconstructed jet within ΔR < 0.2 in (y, φ), and the table
// gives the mean of (reconstructed pt - truth pt) over matched jets, per pileup level, for the
// plain clustering and for the pileup chain's settings. The engine computes every column; it
// gives the reference's bits (tests/pileup-engine-bit-exact.test.ts).
//
//   npm run build:host && node dist/bench/pileup-physics.bench.js [--events 300] [--patch-sizes 3:3,7:7]
//
// --patch-sizes adds a column 'subtracted, ρ patches PE:PP' per size, to see how the patch
// estimator's offset depends on the patch size (the spec's default is 5:5).

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { WasmClusterer } from '../host/clustering/engine.js';
import { EnginePileupClusterer } from '../host/clustering/pileup/engine-chain.js';
import { generateEventsWithTruth } from '../host/generator/generate.js';
import { DEFAULT_GRID, DEFAULT_PILEUP_SETTINGS, DEFAULT_SETTINGS, type Clusterer, type JetSet, type PileupSettings } from '../host/types.js';

const eventsAt = process.argv.indexOf('--events');
const EVENTS = eventsAt >= 0 ? Number(process.argv[eventsAt + 1]) : 300;
const PILEUPS = [50, 100, 200];
const TRUTH_PT_MIN = 30;
const MATCH_R = 0.2;

const settings = { ...DEFAULT_SETTINGS };
const off = DEFAULT_PILEUP_SETTINGS;
const patches = { kind: 'patches', patch: { etaRows: 5, phiColumns: 5 } } as const;
const chain = (pileup: PileupSettings) => new EnginePileupClusterer(DEFAULT_GRID, settings, pileup, 'bench');
const columns: { name: string; clusterer: Clusterer }[] = [
  { name: 'plain', clusterer: new WasmClusterer(DEFAULT_GRID, settings) },
  { name: 'subtracted, ρ patches 5:5', clusterer: chain({ ...off, areas: true, rho: patches, subtract: true }) },
  { name: 'subtracted, ρ kt 0.4', clusterer: chain({ ...off, areas: true, rho: { kind: 'kt', radius: 0.4 }, subtract: true }) },
  { name: 'SoftKiller 5:5', clusterer: chain({ ...off, softKiller: { etaRows: 5, phiColumns: 5 } }) },
  { name: 'SoftKiller + subtracted', clusterer: chain({ ...off, softKiller: { etaRows: 5, phiColumns: 5 }, areas: true, rho: patches, subtract: true }) },
];
const patchSizesAt = process.argv.indexOf('--patch-sizes');
for (const size of patchSizesAt >= 0 ? process.argv[patchSizesAt + 1].split(',') : []) {
  const [etaRows, phiColumns] = size.split(':').map(Number);
  const rho = { kind: 'patches', patch: { etaRows, phiColumns } } as const;
  columns.push({ name: `subtracted, ρ patches ${etaRows}:${phiColumns}`, clusterer: chain({ ...off, areas: true, rho, subtract: true }) });
}
const truthClusterer = new WasmClusterer(DEFAULT_GRID, settings);

function deltaR(y1: number, phi1: number, y2: number, phi2: number): number {
  let dphi = Math.abs(phi1 - phi2);
  if (dphi > Math.PI) dphi = 2 * Math.PI - dphi;
  return Math.hypot(y1 - y2, dphi);
}

/** the pt of the reconstructed jet nearest to (y, phi) within MATCH_R, or null */
function matchedPt(jets: JetSet, y: number, phi: number): number | null {
  let best: number | null = null;
  let bestR = MATCH_R;
  for (let k = 0; k < jets.count; k++) {
    const r = deltaR(jets.rapidity[k], jets.phi[k], y, phi);
    if (r < bestR) {
      bestR = r;
      best = jets.pt[k];
    }
  }
  return best;
}

interface Row {
  pileup: number;
  truthJets: number;
  meanRho: number;
  /** per column: mean offset in GeV, and the fraction of truth jets matched */
  offsetGeV: number[];
  matched: number[];
}

const rows: Row[] = [];
for (const pileup of PILEUPS) {
  const sums = columns.map(() => 0);
  const matches = columns.map(() => 0);
  let truthJets = 0;
  let rhoSum = 0;
  for (const { event, hard } of generateEventsWithTruth(DEFAULT_GRID, { events: EVENTS, pileup, seed: 1000 + pileup })) {
    const truth = truthClusterer.cluster(hard.towerIndex, hard.towerEt);
    const reconstructed = columns.map((column) => column.clusterer.cluster(event.towerIndex, event.towerEt));
    rhoSum += reconstructed[1].pileup!.rho;
    for (let t = 0; t < truth.count; t++) {
      if (truth.pt[t] < TRUTH_PT_MIN) continue;
      truthJets++;
      reconstructed.forEach((jets, c) => {
        const pt = matchedPt(jets, truth.rapidity[t], truth.phi[t]);
        if (pt === null) return;
        matches[c]++;
        sums[c] += pt - truth.pt[t];
      });
    }
  }
  rows.push({
    pileup, truthJets, meanRho: rhoSum / EVENTS,
    offsetGeV: sums.map((sum, c) => sum / matches[c]),
    matched: matches.map((m) => m / truthJets),
  });
}

console.log(`mean (reconstructed pt - truth pt) in GeV of truth jets >= ${TRUTH_PT_MIN} GeV matched within ΔR < ${MATCH_R}, anti-kt R = 0.4, ${EVENTS} events per pileup level (toy generator: invented events, toy pileup)`);
console.table(rows.map((row) => {
  const out: Record<string, string | number> = { pileup: row.pileup, 'truth jets': row.truthJets, 'mean ρ GeV': row.meanRho.toFixed(2) };
  columns.forEach((column, c) => { out[column.name] = `${row.offsetGeV[c].toFixed(2)} (${(100 * row.matched[c]).toFixed(0)} %)`; });
  return out;
}));
console.log('(in brackets: the fraction of truth jets matched)');
for (const row of rows) {
  const ratios = columns.slice(1).map((column, c) => `${column.name} ${(row.offsetGeV[c + 1] / row.offsetGeV[0]).toFixed(3)}`);
  console.log(`pileup ${row.pileup}: offset / plain offset: ${ratios.join(' · ')}`);
}

const here = dirname(fileURLToPath(import.meta.url));
const resultsDir = join(here, '..', '..', 'bench', 'results');
mkdirSync(resultsDir, { recursive: true });
writeFileSync(join(resultsDir, 'pileup-physics.json'), JSON.stringify({ events: EVENTS, columns: columns.map((c) => c.name), rows }, null, 2));
console.log(`written ${join(resultsDir, 'pileup-physics.json')}`);
