// Outside references: protobufjs 8.8.1 (npm, its reflection API on proto/jetlag.proto) reads
// and writes the same bytes as the hand-written codec; wire-format rules (packed or unpacked
// repeated fields, concatenated chunks, last value wins, unknown fields skipped) are those of
// the protobuf encoding guide, https://protobuf.dev/programming-guides/encoding/ (from memory).
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { openRecordFile } from '../host/input/event-source.js';
import { decodeFileHeader } from '../host/formats/file-header.js';
import { decodeJetsRecord, encodeDelimitedJetsRecord, encodeJetsFileHeader, encodeJetsRecord } from '../host/formats/jets-codec.js';
import { JetsFileWriter } from '../host/output/jets-writer.js';
import { formatErrorLine, formatJetsLine } from '../host/formats/jets-jsonl.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { RecordFramer } from '../host/input/record-framer.js';
import type { JetSet } from '../host/types.js';
import { seededRandom as makeRandom } from './support/small-events.js';
import { tempDirForTest } from './support/temp-dir.js';

const JetsRecord = loadJetlagSchema().lookupType('jetlag.JetsRecord');


function randomJets(rand: () => number, withTowers: boolean): JetSet {
  const count = Math.floor(rand() * 6);
  const arr = () => Float64Array.from({ length: count }, () => (rand() - 0.5) * 10 ** Math.floor(rand() * 6 - 2));
  const towerCount = Int32Array.from({ length: count }, () => 1 + Math.floor(rand() * 5));
  const towerStart = new Int32Array(count);
  let total = 0;
  for (let k = 0; k < count; k++) { towerStart[k] = total; total += towerCount[k]; }
  const towers = withTowers ? Int32Array.from({ length: total }, () => Math.floor(rand() * 3200)) : new Int32Array(0);
  return { count, px: arr(), py: arr(), pz: arr(), energy: arr(), pt: arr(), rapidity: arr(), phi: arr(), mass: arr(), towerCount, towerStart, towers };
}

function plainJets(j: JetSet) {
  return {
    count: j.count, px: Array.from(j.px), py: Array.from(j.py), pz: Array.from(j.pz), energy: Array.from(j.energy), pt: Array.from(j.pt),
    rapidity: Array.from(j.rapidity), phi: Array.from(j.phi), mass: Array.from(j.mass), towerCount: Array.from(j.towerCount),
    towerStart: Array.from(j.towerStart), towers: Array.from(j.towers),
  };
}

describe('jets records', () => {
  it('round-trip random jet sets with and without constituents', () => {
    const rand = makeRandom(31);
    for (let k = 0; k < 300; k++) {
      const withTowers = rand() < 0.6;
      const jets = randomJets(rand, withTowers);
      const decoded = decodeJetsRecord(encodeJetsRecord({ event: k, jets, clusterTimeNs: k * 1000 }));
      expect(decoded.problem).toBe('');
      expect(decoded.event).toBe(k);
      expect(decoded.clusterTimeNs).toBe(k * 1000);
      expect(decoded.hasTowers).toBe(withTowers || jets.count === 0);
      expect(plainJets(decoded.jets)).toEqual(plainJets(jets));
    }
  });

  it('are read by protobufjs as written', () => {
    const rand = makeRandom(8);
    for (let k = 0; k < 100; k++) {
      const jets = randomJets(rand, true);
      const o = JetsRecord.toObject(JetsRecord.decode(encodeJetsRecord({ event: 9, jets, clusterTimeNs: 1234 })), { longs: Number, arrays: true });
      expect(o.px).toEqual(Array.from(jets.px));
      expect(o.e).toEqual(Array.from(jets.energy));
      expect(o.y).toEqual(Array.from(jets.rapidity));
      expect(o.constituentCount).toEqual(Array.from(jets.towerCount));
      expect(o.constituentTowers).toEqual(Array.from(jets.towers));
      expect(o.clusterTimeNs).toBe(1234);
    }
  });

  it('read what protobufjs writes, as an outside implementation would', () => {
    const bytes = JetsRecord.encode(JetsRecord.fromObject({
      event: 12, px: [1], py: [2], pz: [3], e: [4], pt: [5], y: [6], phi: [0.5], mass: [0], constituentCount: [2], constituentTowers: [7, 9], clusterTimeNs: 55,
    })).finish();
    const d = decodeJetsRecord(bytes);
    expect(d.problem).toBe('');
    expect([d.event, d.jets.count, d.jets.energy[0], d.jets.phi[0], Array.from(d.jets.towers), d.clusterTimeNs]).toEqual([12, 1, 4, 0.5, [7, 9], 55]);
  });

  it('keep the error text of an invalid event', () => {
    const d = decodeJetsRecord(encodeJetsRecord({ event: 3, jets: null, error: 'tower 2 repeats index 5' }));
    expect([d.event, d.error, d.jets.count, d.problem]).toEqual([3, 'tower 2 repeats index 5', 0, '']);
  });

  it('flag per-jet arrays of different lengths and constituents that do not add up', () => {
    const short = JetsRecord.encode(JetsRecord.fromObject({ event: 1, px: [1, 2], py: [1], pz: [1, 2], e: [1, 2], pt: [1, 2], y: [1, 2], phi: [1, 2], mass: [1, 2], constituentCount: [1, 1] })).finish();
    expect(decodeJetsRecord(short).problem).toBe('py has 1 values but px has 2');
    const towers = JetsRecord.encode(JetsRecord.fromObject({ event: 1, px: [1], py: [1], pz: [1], e: [1], pt: [1], y: [1], phi: [1], mass: [1], constituentCount: [3], constituentTowers: [1, 2] })).finish();
    expect(decodeJetsRecord(towers).problem).toBe('constituent_towers has 2 values but constituent_count adds up to 3');
  });

  it('reject a wrong wire type with the offset inside the record', () => {
    expect(() => decodeJetsRecord(new Uint8Array([0x08, 0x01, 0x10, 0x01]))).toThrow('at record byte 2: field 2 (px) has wire type 0 (varint), expected packed or fixed64');
  });

  it('the delimited form is the length varint and the record', () => {
    const jets = randomJets(makeRandom(3), true);
    const message = encodeJetsRecord({ event: 4, jets, clusterTimeNs: 10 });
    const framed = encodeDelimitedJetsRecord(4, jets, 10, '');
    const bodies: number[][] = [];
    new RecordFramer().feed(framed, (bytes) => bodies.push(Array.from(bytes)));
    expect(bodies).toEqual([Array.from(message)]);
  });
});

describe('jets files', () => {
  it('write a header with the settings and records that openRecordFile reads back', async () => {
    const path = join(tempDirForTest('jets'), 'jets.pb');
    const grid = { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 };
    const settings = { p: -1, radius: 0.4, ptMin: 1, threshold: 0, recombination: 'e' as const, engine: 'reference' };
    const writer = await JetsFileWriter.open(path, grid, settings, { producer: 'jetlag 0.1.0 cluster' }, { gzip: true });
    const jets = randomJets(makeRandom(5), true);
    await writer.writeJets({ event: 0, jets, clusterTimeNs: 10 });
    await writer.writeJets({ event: 1, error: 'bad' });
    await writer.close();
    const source = await openRecordFile(path);
    expect(source.format).toBe('jets-file');
    expect(source.header.settings).toEqual(settings);
    expect(source.header.producer).toBe('jetlag 0.1.0 cluster');
    const read = [];
    for await (const r of source.records) read.push(decodeJetsRecord(r.bytes));
    expect(read.map((d) => [d.event, d.error, d.jets.count])).toEqual([[0, '', jets.count], [1, 'bad', 0]]);
  });

  it('encodeJetsFileHeader gives the delimited header record', () => {
    const framed = encodeJetsFileHeader({ etaMin: 0, etaMax: 1, etaBins: 2, phiBins: 2 }, { p: 1, radius: 1, ptMin: 0, threshold: 0, recombination: 'wta', engine: 'wasm' });
    expect(decodeFileHeader(framed.subarray(1)).settings).toEqual({ p: 1, radius: 1, ptMin: 0, threshold: 0, recombination: 'wta', engine: 'wasm' });
    expect(framed[0]).toBe(framed.length - 1);
  });
});

describe('jets as JSON lines', () => {
  const jets: JetSet = {
    count: 2, px: Float64Array.of(1.5, -0), py: Float64Array.of(0.1, 2), pz: Float64Array.of(1e-7, 3), energy: Float64Array.of(2, 4),
    pt: Float64Array.of(1.5033296378372907, 2), rapidity: Float64Array.of(0.25, -1), phi: Float64Array.of(0.06656816377582381, 1.5707963267948966),
    mass: Float64Array.of(0, 1e21), towerCount: Int32Array.of(2, 1), towerStart: Int32Array.of(0, 2), towers: Int32Array.of(3, 70, 5),
  };

  it('write the documented line with every number in its shortest round-trip form', () => {
    expect(formatJetsLine(7, jets)).toBe(
      '{"event":7,"jets":[' +
      '{"pt":1.5033296378372907,"y":0.25,"phi":0.06656816377582381,"m":0,"px":1.5,"py":0.1,"pz":1e-7,"E":2,"n":2,"towers":[3,70]},' +
      '{"pt":2,"y":-1,"phi":1.5707963267948966,"m":1e+21,"px":-0,"py":2,"pz":3,"E":4,"n":1,"towers":[5]}]}');
  });

  it('parse back to the same doubles', () => {
    const parsed = JSON.parse(formatJetsLine(7, jets));
    expect(parsed.jets.map((j: { pt: number }) => j.pt)).toEqual(Array.from(jets.pt));
    expect(Object.is(parsed.jets[1].px, -0)).toBe(true);
  });

  it('leave out towers when the jets carry none, and write errors as their own line', () => {
    expect(formatJetsLine(1, { ...jets, count: 1, towers: new Int32Array(0) })).toBe(
      '{"event":1,"jets":[{"pt":1.5033296378372907,"y":0.25,"phi":0.06656816377582381,"m":0,"px":1.5,"py":0.1,"pz":1e-7,"E":2,"n":2}]}');
    expect(formatJetsLine(2, { ...jets, count: 0 })).toBe('{"event":2,"jets":[]}');
    expect(formatErrorLine(3, 'tower 1 has "index" 99')).toBe('{"event":3,"error":"tower 1 has \\"index\\" 99"}');
  });
});
