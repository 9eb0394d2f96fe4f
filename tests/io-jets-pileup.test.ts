// Pileup values in jets files, JSON lines and CSV (proto/jetlag.proto fields 14-20 of
// JetsRecord, PileupSettings in the header). Outside reference: protobufjs 8.8.1 (npm, its
// reflection API on proto/jetlag.proto) reads and writes the same bytes as the hand-written
// codec; "unknown fields are skipped" and "unset proto3 fields read as their default" are the
// protobuf encoding guide's rules, https://protobuf.dev/programming-guides/encoding/ (from memory).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeFileHeader, encodeFileHeader } from '../host/formats/file-header.js';
import { decodeJetsRecord, encodeJetsRecord } from '../host/formats/jets-codec.js';
import { formatJetsLine } from '../host/formats/jets-jsonl.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { exportAsText, PILEUP_JETS_CSV_HEADER } from '../host/output/text-export.js';
import { openCandidate } from '../host/input/candidate-reader.js';
import { DEFAULT_GRID, type JetSet, type PileupSettings } from '../host/types.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { seededRandom } from './support/small-events.js';
import { tempDirForTest } from './support/temp-dir.js';

const schema = loadJetlagSchema();
const JetsRecord = schema.lookupType('jetlag.JetsRecord');
const FileHeader = schema.lookupType('jetlag.FileHeader');

function jetsWithPileup(random: () => number): JetSet {
  const count = 1 + Math.floor(random() * 5);
  const values = () => Float64Array.from({ length: count }, () => random() * 100);
  const towerCount = Int32Array.from({ length: count }, () => 1 + Math.floor(random() * 4));
  const towerStart = new Int32Array(count);
  for (let k = 1; k < count; k++) towerStart[k] = towerStart[k - 1] + towerCount[k - 1];
  return {
    count, px: values(), py: values(), pz: values(), energy: values(), pt: values(), rapidity: values(), phi: values(), mass: values(),
    towerCount, towerStart, towers: new Int32Array(0),
    pileup: {
      rho: random() * 40, etCut: random() * 2, killed: Math.floor(random() * 900), subtractedAway: Math.floor(random() * 4),
      ghosts: Int32Array.from({ length: count }, () => Math.floor(random() * 50)),
      area: Float64Array.from({ length: count }, () => random()),
      ptRaw: values(),
    },
  };
}

function plainPileup(jets: JetSet) {
  const p = jets.pileup!;
  return { rho: p.rho, etCut: p.etCut, killed: p.killed, subtractedAway: p.subtractedAway, ghosts: Array.from(p.ghosts), area: Array.from(p.area), ptRaw: Array.from(p.ptRaw) };
}

const PILEUP: PileupSettings = { areas: true, ghostEt: 1e-100, rho: { kind: 'kt', radius: 0.5 }, subtract: true, softKiller: { etaRows: 4, phiColumns: 8 } };
const SETTINGS = { p: -1, radius: 0.4, ptMin: 0, threshold: 0, recombination: 'e' as const, engine: 'wasm' };

describe('pileup values in jets records', () => {
  it('round-trip bit for bit', () => {
    const random = seededRandom(15);
    for (let k = 0; k < 100; k++) {
      const jets = jetsWithPileup(random);
      const decoded = decodeJetsRecord(encodeJetsRecord({ event: k, jets }));
      expect(decoded.problem).toBe('');
      expect(plainPileup(decoded.jets)).toEqual(plainPileup(jets));
    }
  });

  it('are read by protobufjs under the schema names', () => {
    const jets = jetsWithPileup(seededRandom(3));
    const o = JetsRecord.toObject(JetsRecord.decode(encodeJetsRecord({ event: 2, jets })), { longs: Number, arrays: true });
    const p = jets.pileup!;
    expect([o.rho, o.etCut, o.killed, o.subtractedAway]).toEqual([p.rho, p.etCut, p.killed, p.subtractedAway]);
    expect([o.ghosts, o.area, o.ptRaw]).toEqual([Array.from(p.ghosts), Array.from(p.area), Array.from(p.ptRaw)]);
  });

  it('are read as protobufjs writes them', () => {
    const bytes = JetsRecord.encode(JetsRecord.fromObject({
      event: 4, px: [1], py: [2], pz: [3], e: [4], pt: [5], y: [0.5], phi: [1], mass: [0.25], constituentCount: [1],
      rho: 12.25, etCut: 0.75, killed: 40, subtractedAway: 2, ghosts: [33], area: [0.5], ptRaw: [9.5],
    })).finish();
    const d = decodeJetsRecord(bytes);
    expect(d.problem).toBe('');
    expect(plainPileup(d.jets)).toEqual({ rho: 12.25, etCut: 0.75, killed: 40, subtractedAway: 2, ghosts: [33], area: [0.5], ptRaw: [9.5] });
  });

  it('leave a record without them as it was, and give zeros and ptRaw = pt when asked for them', () => {
    const old = JetsRecord.encode(JetsRecord.fromObject({ event: 1, px: [1], py: [2], pz: [3], e: [4], pt: [5], y: [0.5], phi: [1], mass: [0], constituentCount: [2] })).finish();
    expect(decodeJetsRecord(old).jets.pileup).toBeUndefined();
    expect(plainPileup(decodeJetsRecord(old, { pileup: true }).jets)).toEqual({ rho: 0, etCut: 0, killed: 0, subtractedAway: 0, ghosts: [0], area: [0], ptRaw: [5] });
  });

  it('name per-jet pileup arrays of another length than the jets', () => {
    const bytes = JetsRecord.encode(JetsRecord.fromObject({ event: 6, px: [1], py: [2], pz: [3], e: [4], pt: [5], y: [0.5], phi: [1], mass: [0], constituentCount: [1], area: [0.5, 0.5] })).finish();
    expect(decodeJetsRecord(bytes).problem).toBe('area has 2 values but px has 1');
  });
});

describe('pileup settings in the jets file header', () => {
  it('round-trip, and a header without them reads as before', () => {
    const grid = { ...DEFAULT_GRID };
    const withPileup = decodeFileHeader(encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: 'l', settings: { ...SETTINGS, pileup: PILEUP } }));
    expect(withPileup.settings).toEqual({ ...SETTINGS, pileup: PILEUP });
    const patches = { ...PILEUP, rho: { kind: 'patches' as const, patch: { etaRows: 5, phiColumns: 3 } }, softKiller: null, subtract: false, ghostEt: 1e-80 };
    expect(decodeFileHeader(encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: 'l', settings: { ...SETTINGS, pileup: patches } })).settings!.pileup).toEqual(patches);
    expect(decodeFileHeader(encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: 'l', settings: SETTINGS })).settings).toEqual(SETTINGS);
  });

  it('are read by protobufjs under the schema names', () => {
    const bytes = encodeFileHeader({ kind: 'jets', grid: { ...DEFAULT_GRID }, producer: 'p', label: 'l', settings: { ...SETTINGS, pileup: PILEUP } });
    const o = FileHeader.toObject(FileHeader.decode(bytes), { enums: String });
    expect(o.settings.pileup).toEqual({ areas: true, ghostEt: 1e-100, rho: 'RHO_KT_JETS', rhoKtRadius: 0.5, subtract: true, softkillerPatchEta: 4, softkillerPatchPhi: 8 });
  });
});

describe('pileup values as text', () => {
  it('JSON lines carry the per-event and per-jet values after the documented keys', () => {
    const jets = jetsWithPileup(seededRandom(9));
    const line = JSON.parse(formatJetsLine(3, jets, false));
    const p = jets.pileup!;
    expect(Object.keys(line)).toEqual(['event', 'rho', 'etCut', 'killed', 'subtractedAway', 'jets']);
    expect([line.rho, line.etCut, line.killed, line.subtractedAway]).toEqual([p.rho, p.etCut, p.killed, p.subtractedAway]);
    expect(line.jets.map((j: { ghosts: number; area: number; ptRaw: number }) => [j.ghosts, j.area, j.ptRaw]))
      .toEqual(Array.from(p.area, (area, k) => [p.ghosts[k], area, p.ptRaw[k]]));
  });

  it('CSV export writes the pileup columns, and compare reads the file back as a candidate', async () => {
    const dir = tempDirForTest('jets-pileup-csv');
    const path = join(dir, 'jets.pb');
    const writer = await JetsFileWriter.open(path, { ...DEFAULT_GRID }, { ...SETTINGS, pileup: PILEUP }, { producer: 'test' });
    const jets = jetsWithPileup(seededRandom(21));
    await writer.writeJets({ event: 5, jets });
    await writer.close();
    const csv = join(dir, 'jets.csv');
    const problems: string[] = [];
    await exportAsText({ input: path, fileLabel: path, format: 'csv', out: csv, stdout: process.stdout, onProblem: (line) => problems.push(line) });
    expect(problems).toEqual([]);
    const rows = readFileSync(csv, 'utf8').trim().split('\n');
    expect(rows[0]).toBe(`${PILEUP_JETS_CSV_HEADER},cluster_time_ns,towers`);
    const p = jets.pileup!;
    // the record states no tower count: its cell is empty, after cluster_time_ns 0
    expect(rows[1]).toBe([5, jets.pt[0], jets.rapidity[0], jets.phi[0], jets.mass[0], p.ghosts[0], p.area[0], p.ptRaw[0], p.rho, p.etCut, p.killed, p.subtractedAway, 0, ''].join(','));
    const candidate = await openCandidate(csv);
    const events = [];
    for await (const event of candidate.events) events.push(event);
    expect(events.map((e) => [e.event, e.error, Array.from(e.pt)])).toEqual([[5, '', Array.from(jets.pt)]]);
  });
});
