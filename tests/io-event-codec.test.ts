// Outside references: protobufjs 8.8.1 (npm, its reflection API on proto/jetlag.proto) reads
// and writes the same bytes as the hand-written codec; wire-format rules (packed or unpacked
// repeated fields, concatenated chunks, last value wins, unknown fields skipped) are those of
// the protobuf encoding guide, https://protobuf.dev/programming-guides/encoding/ (from memory).
import { describe, expect, it } from 'vitest';
import { decodeEventRecord, encodeEventRecord, EventRecordDecoder } from '../host/formats/event-codec.js';
import { decodeFileHeader, encodeFileHeader, looksLikeFileHeader, type FileHeader } from '../host/formats/file-header.js';
import { loadJetlagSchema } from './support/proto-schema.js';
import { ProtoWriter } from '../host/formats/wire.js';
import { seededRandom as makeRandom } from './support/small-events.js';

const schema = loadJetlagSchema();
const EventRecord = schema.lookupType('jetlag.EventRecord');
const FileHeaderType = schema.lookupType('jetlag.FileHeader');


function randomDouble(rand: () => number): number {
  const kind = rand();
  if (kind < 0.05) return 0;
  if (kind < 0.08) return -0;
  if (kind < 0.1) return Number.MIN_VALUE;
  if (kind < 0.12) return -1e300;
  if (kind < 0.14) return NaN;
  if (kind < 0.16) return Infinity;
  return (rand() - 0.3) * 10 ** Math.floor(rand() * 8 - 3);
}

function randomArray(rand: () => number, max: number, item: () => number): number[] {
  const n = rand() < 0.2 ? 0 : Math.floor(rand() * max);
  return Array.from({ length: n }, item);
}

function randomEvent(rand: () => number) {
  const indexItem = () => {
    const r = rand();
    if (r < 0.05) return -1 - Math.floor(rand() * 2 ** 31 - 1); // negative: 10-byte varints
    if (r < 0.5) return Math.floor(rand() * 128);
    return Math.floor(rand() * 2 ** 31);
  };
  const event = rand() < 0.1 ? 0 : rand() < 0.1 ? Number.MAX_SAFE_INTEGER - Math.floor(rand() * 1000) : Math.floor(rand() * 1e6);
  return {
    event,
    towerIndex: randomArray(rand, 300, indexItem),
    towerEt: randomArray(rand, 300, () => randomDouble(rand)),
    depositEta: randomArray(rand, 40, () => randomDouble(rand)),
    depositPhi: randomArray(rand, 40, () => randomDouble(rand)),
    depositEt: randomArray(rand, 40, () => randomDouble(rand)),
    error: rand() < 0.2 ? `bad row ${Math.floor(rand() * 100)} — é ✓` : '',
  };
}

function asPlain(decoded: ReturnType<typeof decodeEventRecord>) {
  return {
    event: decoded.event,
    towerIndex: Array.from(decoded.towerIndex),
    towerEt: Array.from(decoded.towerEt),
    depositEta: Array.from(decoded.depositEta),
    depositPhi: Array.from(decoded.depositPhi),
    depositEt: Array.from(decoded.depositEt),
    error: decoded.error,
  };
}

function protobufjsDecode(bytes: Uint8Array) {
  const o = EventRecord.toObject(EventRecord.decode(bytes), { longs: Number, arrays: true, defaults: true });
  return {
    event: o.event, towerIndex: o.towerIndex, towerEt: o.towerEt, depositEta: o.depositEta,
    depositPhi: o.depositPhi, depositEt: o.depositEt, error: o.error,
  };
}

/** same doubles bit for bit: toEqual treats -0 and 0 as different and NaN as equal, which is what we want */
describe('event records against protobufjs', () => {
  it('the hand decoder reads protobufjs-encoded random records exactly', () => {
    const rand = makeRandom(12345);
    for (let k = 0; k < 400; k++) {
      const event = randomEvent(rand);
      const bytes = EventRecord.encode(EventRecord.fromObject(event)).finish();
      expect(asPlain(decodeEventRecord(bytes))).toEqual(event);
    }
  });

  it('protobufjs reads hand-encoded random records exactly', () => {
    const rand = makeRandom(777);
    for (let k = 0; k < 400; k++) {
      const event = randomEvent(rand);
      const bytes = encodeEventRecord(event);
      expect(protobufjsDecode(bytes)).toEqual(event);
    }
  });

  it('hand encoding gives the same bytes as protobufjs', () => {
    const rand = makeRandom(99);
    for (let k = 0; k < 200; k++) {
      const event = randomEvent(rand);
      const ours = encodeEventRecord(event);
      const theirs = EventRecord.encode(EventRecord.fromObject(event)).finish();
      expect(Buffer.from(ours).toString('hex')).toBe(Buffer.from(theirs).toString('hex'));
    }
  });

  it('one reused decoder gives the same as fresh decodes, records shrinking and growing', () => {
    const rand = makeRandom(4242);
    const decoder = new EventRecordDecoder();
    for (let k = 0; k < 200; k++) {
      const event = randomEvent(rand);
      decoder.decode(encodeEventRecord(event));
      expect(asPlain(decoder.toDecodedEvent())).toEqual(event);
    }
  });

  it('reads unpacked repeated fields and concatenates repeated chunks, as protobuf parsers must', () => {
    const w = new ProtoWriter();
    w.uintField(1, 7);
    w.tag(2, 0).varint(5); // unpacked tower_index
    w.packedVarints(2, [6, -7]);
    w.tag(3, 1); // unpacked tower_et
    const one = new DataView(new ArrayBuffer(8));
    one.setFloat64(0, 2.5, true);
    const bytes = new Uint8Array([...w.finish(), ...new Uint8Array(one.buffer)]);
    const w2 = new ProtoWriter();
    w2.packedDoubles(3, [1.25, 3]);
    w2.uintField(1, 8); // the last event number wins
    const all = new Uint8Array([...bytes, ...w2.finish()]);
    const ours = asPlain(decodeEventRecord(all));
    expect(ours).toEqual(protobufjsDecode(all));
    expect(ours.towerIndex).toEqual([5, 6, -7]);
    expect(ours.towerEt).toEqual([2.5, 1.25, 3]);
    expect(ours.event).toBe(8);
  });

  it('skips unknown fields of every wire type', () => {
    const w = new ProtoWriter();
    w.uintField(1, 3);
    w.tag(20, 0).varint(2 ** 40);
    w.tag(21, 1).varint(1).varint(2).varint(3).varint(4).varint(5).varint(6).varint(7).varint(8); // 8 payload bytes
    w.tag(22, 2).varint(3).varint(1).varint(2).varint(3);
    w.tag(23, 5).varint(0x7f).varint(0x7f).varint(0x7f).varint(0x7f);
    w.packedVarints(2, [42]);
    const bytes = w.finish();
    expect(asPlain(decodeEventRecord(bytes)).towerIndex).toEqual([42]);
    expect(asPlain(decodeEventRecord(bytes))).toEqual(protobufjsDecode(bytes));
  });
});

describe('event record decoder errors', () => {
  const valid = encodeEventRecord({ event: 3, towerIndex: [1, 2], towerEt: [1.5, 2.5] });

  function decodeError(bytes: Uint8Array | number[]): string {
    try {
      decodeEventRecord(bytes instanceof Uint8Array ? bytes : new Uint8Array(bytes));
    } catch (e) {
      return (e as Error).message;
    }
    return 'no error';
  }

  it('rejects a known field with the wrong wire type', () => {
    expect(decodeError([0x08, 0x03, 0x1d, 0, 0, 0, 0])).toBe('at record byte 2: field 3 (tower_et) has wire type 5 (fixed32), expected packed or fixed64');
    expect(decodeError([0x0a, 0x01, 0x00])).toBe('at record byte 0: field 1 (event) has wire type 2 (length-delimited), expected 0 (varint)');
    expect(decodeError([0x11, 0, 0, 0, 0, 0, 0, 0, 0])).toBe('at record byte 0: field 2 (tower_index) has wire type 1 (fixed64), expected packed or varint');
    expect(decodeError([0x38, 0x01])).toBe('at record byte 0: field 7 (error) has wire type 0 (varint), expected 2 (length-delimited)');
  });

  it('rejects a record cut inside a field', () => {
    // valid is 08 03 | 12 02 01 02 | 1a 10 <16 bytes>: a cut between fields leaves a valid record
    for (let cut = 1; cut < valid.length; cut++) {
      if (cut === 2 || cut === 6) continue;
      expect(decodeError(valid.subarray(0, cut))).toMatch(/^at record byte \d+: (truncated varint|field length \d+ runs past the end of the record \(\d+ bytes left\))$/);
    }
    expect(decodeError(valid.subarray(0, 5))).toBe('at record byte 3: field length 2 runs past the end of the record (1 bytes left)');
  });

  it('rejects a varint cut inside a packed field', () => {
    // packed tower_index of length 1 holding the first byte of a two-byte varint
    expect(decodeError([0x12, 0x01, 0x80, 0x01])).toBe('at record byte 2: truncated varint');
  });

  it('rejects a packed double field whose length is not a multiple of 8', () => {
    expect(decodeError([0x1a, 0x03, 1, 2, 3])).toBe('at record byte 1: packed field 3 (tower_et) has length 3, not a multiple of 8');
  });

  it('rejects group and invalid wire types in garbage', () => {
    expect(decodeError([0x08, 0x01, 0x0b])).toBe('at record byte 2: field 1 has unsupported wire type 3 (start-group)');
    expect(decodeError([0xff, 0xff, 0x03])).toBe('at record byte 0: field 8191 has unsupported wire type 7 (invalid 7)');
    expect(decodeError([0x00])).toBe('at record byte 0: bad field tag 0');
  });

  it('rejects a varint longer than 10 bytes', () => {
    expect(decodeError([0x08, ...new Array(10).fill(0xff), 0x01])).toBe('at record byte 1: varint longer than 10 bytes');
  });

  it('rejects an event number above 2^53 - 1', () => {
    const w = new ProtoWriter().tag(1, 0).varint(2 ** 53);
    expect(decodeError(w.finish())).toBe('at record byte 1: event number 9007199254740992 is above 2^53 - 1');
  });

  it('reads random garbage either as a record or as a one-line error, never anything else', () => {
    const rand = makeRandom(5);
    let errors = 0;
    for (let k = 0; k < 2000; k++) {
      const bytes = new Uint8Array(Math.floor(rand() * 40));
      for (let j = 0; j < bytes.length; j++) bytes[j] = Math.floor(rand() * 256);
      const text = decodeError(bytes);
      if (text !== 'no error') {
        errors++;
        expect(text).toMatch(/^at record byte \d+: [^\n]+$/);
      }
    }
    expect(errors).toBeGreaterThan(1000);
  });
});

describe('file header', () => {
  const eventsHeader: FileHeader = {
    kind: 'events', grid: { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 },
    producer: 'jetlag 0.1.0 test', label: 'run 7, fictional', formatVersion: 1,
  };
  const jetsHeader: FileHeader = {
    kind: 'jets', grid: { etaMin: 0, etaMax: 1, etaBins: 10, phiBins: 8 },
    producer: 'p', label: '', formatVersion: 1,
    settings: { p: 0, radius: 0.4, ptMin: 5, threshold: 0.5, recombination: 'wta', engine: 'reference' },
  };

  it('round-trips both kinds', () => {
    expect(decodeFileHeader(encodeFileHeader(eventsHeader))).toEqual(eventsHeader);
    expect(decodeFileHeader(encodeFileHeader(jetsHeader))).toEqual(jetsHeader);
  });

  it('reads like protobufjs does', () => {
    const o = FileHeaderType.toObject(FileHeaderType.decode(encodeFileHeader(jetsHeader)), { defaults: true, enums: String });
    expect(o).toEqual({
      signature: 'jetlag', formatVersion: 1, kind: 'FILE_KIND_JETS',
      grid: { etaMin: 0, etaMax: 1, etaBins: 10, phiBins: 8 }, producer: 'p', label: '',
      // the sub-messages of steps that did not run are absent: protobufjs reads them as null
      settings: { p: 0, radius: 0.4, ptMin: 5, threshold: 0.5, recombination: 'RECOMBINATION_WINNER_TAKE_ALL', engine: 'reference', pileup: null, grooming: null },
    });
  });

  it('reads a header written by protobufjs', () => {
    const bytes = FileHeaderType.encode(FileHeaderType.fromObject({
      signature: 'jetlag', formatVersion: 1, kind: 'FILE_KIND_EVENTS',
      grid: { etaMin: -2.5, etaMax: 2.5, etaBins: 50, phiBins: 64 }, producer: 'jetlag 0.1.0 test', label: 'run 7, fictional',
    })).finish();
    expect(decodeFileHeader(bytes)).toEqual(eventsHeader);
  });

  it('tells our header from other bytes', () => {
    expect(looksLikeFileHeader(encodeFileHeader(eventsHeader))).toBe(true);
    expect(looksLikeFileHeader(new TextEncoder().encode('event,ieta,iphi,et\n'))).toBe(false);
    expect(looksLikeFileHeader(encodeEventRecord({ event: 1, towerIndex: [1], towerEt: [2] }))).toBe(false);
  });

  it('rejects a header that is not usable', () => {
    const noSignature = FileHeaderType.encode(FileHeaderType.fromObject({ kind: 1, grid: { etaMax: 1, etaBins: 1, phiBins: 1 } })).finish();
    expect(() => decodeFileHeader(noSignature)).toThrow('not a jetlag file: the first record has signature "", expected "jetlag"');
    const newer = FileHeaderType.encode(FileHeaderType.fromObject({ signature: 'jetlag', formatVersion: 2, kind: 1 })).finish();
    expect(() => decodeFileHeader(newer)).toThrow('file format version 2 is newer than this reader (version 1)');
    const noKind = FileHeaderType.encode(FileHeaderType.fromObject({ signature: 'jetlag', formatVersion: 1 })).finish();
    expect(() => decodeFileHeader(noKind)).toThrow('file header has unknown kind 0 (expected 1 events or 2 jets)');
    const noGrid = FileHeaderType.encode(FileHeaderType.fromObject({ signature: 'jetlag', kind: 1 })).finish();
    expect(() => decodeFileHeader(noGrid)).toThrow('file header has no grid');
    const badGrid = FileHeaderType.encode(FileHeaderType.fromObject({ signature: 'jetlag', kind: 1, grid: { etaMin: 1, etaMax: 0, etaBins: 1, phiBins: 1 } })).finish();
    expect(() => decodeFileHeader(badGrid)).toThrow('file header grid: eta range must be finite with etaMax > etaMin, got [1, 0)');
    const noSettings = FileHeaderType.encode(FileHeaderType.fromObject({ signature: 'jetlag', kind: 2, grid: { etaMax: 1, etaBins: 1, phiBins: 1 } })).finish();
    expect(() => decodeFileHeader(noSettings)).toThrow('jets file header has no cluster settings');
  });
});
