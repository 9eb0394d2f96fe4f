// Outside references: the delimited form (varint length, then the message) and varints of at
// most 10 bytes follow the protobuf encoding guide, https://protobuf.dev/programming-guides/encoding/;
// gzip's magic bytes 1f 8b are RFC 1952 section 2.3.1 (both from memory).
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { InputError } from '../host/errors.js';
import { RecordFramer } from '../host/input/record-framer.js';
import { readRecords } from '../host/input/record-reader.js';
import { delimit } from '../host/formats/wire.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('records');
let fileCount = 0;
function tempFile(bytes: Uint8Array, name = `f${fileCount++}.pb`): string {
  const path = join(dir, name);
  writeFileSync(path, bytes);
  return path;
}

function concat(parts: Uint8Array[]): Uint8Array {
  return Buffer.concat(parts.map((p) => Buffer.from(p.buffer, p.byteOffset, p.byteLength)));
}

function body(length: number, seed: number): Uint8Array {
  const out = new Uint8Array(length);
  for (let k = 0; k < length; k++) out[k] = (seed * 31 + k * 7) & 0xff;
  return out;
}

/** a stream that hands out `bytes` in chunks of `size` */
function chunked(bytes: Uint8Array, size: number): Readable {
  const chunks: Buffer[] = [];
  for (let k = 0; k < bytes.length; k += size) chunks.push(Buffer.from(bytes.subarray(k, k + size)));
  return Readable.from(chunks);
}

async function collect(input: string | NodeJS.ReadableStream, options = {}) {
  const records: { bytes: number[]; offset: number }[] = [];
  let error: unknown = null;
  try {
    for await (const r of readRecords(input, options)) records.push({ bytes: Array.from(r.bytes), offset: r.offset });
  } catch (e) {
    error = e;
  }
  return { records, error: error as Error | null };
}

// three records: 3 bytes, 0 bytes, 300 bytes (two-byte length varint)
const bodies = [body(3, 1), body(0, 2), body(300, 3)];
const stream = concat(bodies.map(delimit));
const expected = [
  { bytes: Array.from(bodies[0]), offset: 0 },
  { bytes: [], offset: 4 },
  { bytes: Array.from(bodies[2]), offset: 5 },
];

describe('readRecords framing', () => {
  it('yields each record body with the offset of its length varint', async () => {
    const { records, error } = await collect(tempFile(stream));
    expect(error).toBeNull();
    expect(records).toEqual(expected);
  });

  it('gives the same records whatever the chunk boundaries', async () => {
    for (const size of [1, 2, 3, 5, 7, 64, 301]) {
      const { records, error } = await collect(chunked(stream, size));
      expect(error).toBeNull();
      expect(records).toEqual(expected);
    }
  });

  it('reads gzip by content, whatever the file name', async () => {
    const { records, error } = await collect(tempFile(gzipSync(stream), 'plain-name.pb'));
    expect(error).toBeNull();
    expect(records).toEqual(expected);
  });

  it('reads an uncompressed file named .gz as uncompressed', async () => {
    const { records } = await collect(tempFile(stream, 'not-really.gz'));
    expect(records).toEqual(expected);
  });

  it('reads an empty file as no records', async () => {
    const { records, error } = await collect(tempFile(new Uint8Array(0)));
    expect(error).toBeNull();
    expect(records).toEqual([]);
  });

  it('yields a record inside one chunk as a view of that chunk, not a copy', () => {
    const framer = new RecordFramer();
    const chunk = delimit(body(10, 4));
    const seen: Uint8Array[] = [];
    framer.feed(chunk, (bytes) => seen.push(bytes));
    expect(seen).toHaveLength(1);
    expect(seen[0].buffer).toBe(chunk.buffer);
  });
});

describe('readRecords bad input', () => {
  it('stops at a length above the cap, after the records before it', async () => {
    const bad = concat([stream, new Uint8Array([0x81, 0x08]), body(1025, 5)]); // length 1025
    const path = tempFile(bad, 'huge.pb');
    const { records, error } = await collect(path, { maxRecordBytes: 1024 });
    expect(records).toEqual(expected);
    expect(error).toBeInstanceOf(InputError);
    expect(error!.message).toBe(`${path}, byte 307: record length 1025 exceeds the limit of 1024 bytes`);
  });

  it('caps records at 64 MiB by default', async () => {
    // length varint of 64 MiB + 1 = 0x4000001
    const bad = concat([new Uint8Array([0x81, 0x80, 0x80, 0x20])]);
    const { error } = await collect(tempFile(bad), { fileLabel: 'cap.pb' });
    expect(error!.message).toBe('cap.pb, byte 0: record length 67108865 exceeds the limit of 67108864 bytes');
  });

  it('stops at a truncated record body', async () => {
    const bad = concat([stream, new Uint8Array([10, 1, 2, 3])]);
    const { records, error } = await collect(tempFile(bad), { fileLabel: 'cut.pb' });
    expect(records).toEqual(expected);
    expect(error!.message).toBe('cut.pb, byte 307: truncated record: length 10 but only 3 bytes follow');
  });

  it('stops at a record length cut inside its varint', async () => {
    const bad = concat([stream, new Uint8Array([0x80, 0x80])]);
    const { records, error } = await collect(chunked(bad, 2), { fileLabel: 'cut.pb' });
    expect(records).toEqual(expected);
    expect(error!.message).toBe('cut.pb, byte 307: truncated record: the input ends inside its length varint');
  });

  it('rejects a length varint longer than 10 bytes', async () => {
    const bad = concat([stream, new Uint8Array(11).fill(0x80), new Uint8Array([0])]);
    const { records, error } = await collect(tempFile(bad), { fileLabel: 'v.pb' });
    expect(records).toEqual(expected);
    expect(error!.message).toBe('v.pb, byte 307: bad record length: varint longer than 10 bytes');
  });

  it('rejects a length above 32 bits even with a larger cap', async () => {
    const bad = concat([stream, new Uint8Array([0xff, 0xff, 0xff, 0xff, 0x1f])]);
    const { records, error } = await collect(tempFile(bad), { fileLabel: 'v.pb', maxRecordBytes: 2 ** 40 });
    expect(records).toEqual(expected);
    expect(error!.message).toBe('v.pb, byte 307: record length 8589934591 overflows 32 bits');
  });

  it('stops at truncated gzip, after every record decompressed before the cut', async () => {
    const many = concat(Array.from({ length: 2000 }, (_, k) => delimit(body(50, k))));
    const zipped = gzipSync(many);
    const cut = zipped.subarray(0, Math.floor(zipped.length * 0.6));
    const { records, error } = await collect(tempFile(cut), { fileLabel: 'cut.pb.gz' });
    expect(records.length).toBeGreaterThan(100);
    expect(records.length).toBeLessThan(2000);
    records.forEach((r, k) => {
      expect(r.offset).toBe(k * 51);
      expect(r.bytes).toEqual(Array.from(body(50, k)));
    });
    expect(error!.message).toMatch(/^cut\.pb\.gz, byte \d+: gzip data is truncated \(unexpected end of file\); offsets count uncompressed bytes$/);
  });

  it('reports corrupt gzip data', async () => {
    const zipped = Buffer.from(gzipSync(stream));
    zipped[10] ^= 0xff; // first byte of the deflate data
    zipped[11] ^= 0xff;
    const { error } = await collect(tempFile(zipped), { fileLabel: 'bad.gz' });
    expect(error).toBeInstanceOf(InputError);
    expect(error!.message).toMatch(/^bad\.gz, byte \d+: gzip data is corrupt \(.+\); offsets count uncompressed bytes$/);
  });

  it('names a missing file', async () => {
    const { error } = await collect(join(dir, 'missing.pb'));
    expect(error!.message).toBe(`${join(dir, 'missing.pb')}: cannot open: no such file`);
  });
});
