// Outside reference: protobufjs 8.8.1 (npm, its reflection API on proto/jetlag.proto) reads and
// writes the same bytes as the hand-written codec for the grooming fields (settings field 8,
// JetsRecord fields 21 and 22); proto3 sub-message presence and unknown-field skipping are the
// protobuf encoding guide's rules, https://protobuf.dev/programming-guides/encoding/ (from memory).
import { describe, expect, it } from 'vitest';
import { decodeFileHeader, encodeFileHeader } from '../host/formats/file-header.js';
import { decodeJetsRecord, encodeJetsRecord } from '../host/formats/jets-codec.js';
import { allocateSoftDropJets, allocateTrimmedJets } from '../host/clustering/grooming/rows.js';
import { JET_DOUBLE_FIELDS } from '../host/clustering/jet-set.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { seededRandom as makeRandom } from './support/small-events.js';
import type { JetSet } from '../host/types.js';

const schema = loadJetlagSchema();
const JetsRecord = schema.lookupType('jetlag.JetsRecord');
const FileHeader = schema.lookupType('jetlag.FileHeader');
const grid = { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 };

function randomGroomedJets(rand: () => number): JetSet {
  const count = Math.floor(rand() * 5);
  const arr = () => Float64Array.from({ length: count }, () => (rand() - 0.25) * 10 ** Math.floor(rand() * 5 - 1));
  const ints = () => Int32Array.from({ length: count }, () => Math.floor(rand() * 9));
  const towerCount = Int32Array.from({ length: count }, () => 1 + Math.floor(rand() * 5));
  const towerStart = new Int32Array(count);
  for (let k = 1; k < count; k++) towerStart[k] = towerStart[k - 1] + towerCount[k - 1];
  const trim = allocateTrimmedJets(count);
  const softDrop = allocateSoftDropJets(count);
  for (const rows of [trim, softDrop]) {
    for (const name of JET_DOUBLE_FIELDS) rows[name].set(arr());
    rows.towerCount.set(ints());
  }
  trim.subjets.set(ints());
  softDrop.zg.set(arr());
  softDrop.deltaRg.set(arr());
  return { count, px: arr(), py: arr(), pz: arr(), energy: arr(), pt: arr(), rapidity: arr(), phi: arr(), mass: arr(), towerCount, towerStart, towers: new Int32Array(0), trim, softDrop };
}

const plain = (rows: object | undefined) => rows && Object.fromEntries(Object.entries(rows).map(([k, v]) => [k, Array.from(v as ArrayLike<number>)]));

describe('groomed jets in jets records', () => {
  it('round-trip trimmed and soft-dropped rows, zero jets included', () => {
    const rand = makeRandom(16);
    for (let k = 0; k < 200; k++) {
      const jets = randomGroomedJets(rand);
      const decoded = decodeJetsRecord(encodeJetsRecord({ event: k, jets }));
      expect(decoded.problem).toBe('');
      expect(plain(decoded.jets.trim)).toEqual(plain(jets.trim));
      expect(plain(decoded.jets.softDrop)).toEqual(plain(jets.softDrop));
    }
  });

  it('are read by protobufjs as written', () => {
    const rand = makeRandom(17);
    for (let k = 0; k < 100; k++) {
      const jets = randomGroomedJets(rand);
      const o = JetsRecord.toObject(JetsRecord.decode(encodeJetsRecord({ event: 2, jets })), { longs: Number, arrays: true });
      expect(o.trim.mass).toEqual(Array.from(jets.trim!.mass));
      expect(o.trim.e).toEqual(Array.from(jets.trim!.energy));
      expect(o.trim.towerCount).toEqual(Array.from(jets.trim!.towerCount));
      expect(o.trim.subjets).toEqual(Array.from(jets.trim!.subjets));
      expect(o.softDrop.pt).toEqual(Array.from(jets.softDrop!.pt));
      expect(o.softDrop.y).toEqual(Array.from(jets.softDrop!.rapidity));
      expect(o.softDrop.zg).toEqual(Array.from(jets.softDrop!.zg));
      expect(o.softDrop.rg).toEqual(Array.from(jets.softDrop!.deltaRg));
    }
  });

  it('read what protobufjs writes', () => {
    const one = { px: [1], py: [2], pz: [3], e: [9], pt: [2.5], y: [0.3], phi: [1.2], mass: [4], towerCount: [3] };
    const bytes = JetsRecord.encode(JetsRecord.fromObject({
      event: 5, px: [1], py: [2], pz: [3], e: [10], pt: [2.2], y: [0.3], phi: [1.1], mass: [5], constituentCount: [4],
      trim: { ...one, subjets: [2] }, softDrop: { ...one, zg: [0.25], rg: [0.4] },
    })).finish();
    const d = decodeJetsRecord(bytes);
    expect(d.problem).toBe('');
    expect([d.jets.trim!.energy[0], d.jets.trim!.subjets[0], d.jets.softDrop!.zg[0], d.jets.softDrop!.deltaRg[0], d.jets.softDrop!.towerCount[0]]).toEqual([9, 2, 0.25, 0.4, 3]);
  });

  it('are absent from records written without grooming, unless the header says a groomer ran', () => {
    const jets = randomGroomedJets(makeRandom(3));
    const bare = encodeJetsRecord({ event: 1, jets: { ...jets, trim: undefined, softDrop: undefined } });
    expect(decodeJetsRecord(bare).jets.trim).toBeUndefined();
    const empty = decodeJetsRecord(encodeJetsRecord({ event: 1, jets: { ...jets, count: 0 } }), { trim: true, softDrop: true });
    expect([empty.problem, empty.jets.trim?.pt.length, empty.jets.softDrop?.zg.length]).toEqual(['', 0, 0]);
  });

  it('flag a groomed array whose length is not the jet count', () => {
    const bytes = JetsRecord.encode(JetsRecord.fromObject({
      event: 1, px: [1, 2], py: [1, 2], pz: [1, 2], e: [1, 2], pt: [1, 2], y: [1, 2], phi: [1, 2], mass: [1, 2], constituentCount: [1, 1],
      softDrop: { px: [1, 2], py: [1, 2], pz: [1, 2], e: [1, 2], pt: [1, 2], y: [1, 2], phi: [1, 2], mass: [1, 2], towerCount: [1, 1], zg: [0], rg: [0, 0] },
    })).finish();
    expect(decodeJetsRecord(bytes).problem).toBe('soft_drop.zg has 1 values but px has 2');
  });
});

describe('grooming settings in jets file headers', () => {
  const base = { p: -1, radius: 1, ptMin: 200, threshold: 0, recombination: 'e' as const, engine: 'wasm' };

  it('round-trip, soft drop 0:0 included (present and empty)', () => {
    for (const grooming of [{ trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: null }, { trim: null, softDrop: { zCut: 0, beta: 0 } }, { trim: { subjetRadius: 0.3, ptFraction: 0 }, softDrop: { zCut: 0.1, beta: 1 } }]) {
      const settings = { ...base, grooming };
      expect(decodeFileHeader(encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: '', settings })).settings).toEqual(settings);
    }
  });

  it('are read by protobufjs, and a header without them reads as before', () => {
    const bytes = encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: '', settings: { ...base, grooming: { trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1, beta: 0 } } } });
    const o = FileHeader.toObject(FileHeader.decode(bytes));
    expect(o.settings.grooming).toEqual({ trim: { subjetRadius: 0.2, ptFraction: 0.05 }, softDrop: { zCut: 0.1 } });
    const old = encodeFileHeader({ kind: 'jets', grid, producer: 'p', label: '', settings: base });
    expect(decodeFileHeader(old).settings).toEqual(base);
  });
});
