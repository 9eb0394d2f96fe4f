import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { gunzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { RecordFramer } from '../host/input/record-framer.js';
import { RecordFileWriter } from '../host/output/record-writer.js';
import { TextFileWriter } from '../host/output/text-file-writer.js';
import { tempDirForSuite } from './support/temp-dir.js';

const dir = tempDirForSuite('writers');

function body(length: number, seed: number): Uint8Array {
  return Uint8Array.from({ length }, (_, k) => (seed + k * 13) & 0xff);
}

function frames(bytes: Uint8Array): number[][] {
  const out: number[][] = [];
  const framer = new RecordFramer();
  framer.feed(bytes, (b) => out.push(Array.from(b)));
  framer.finish();
  expect(framer.problem).toBeNull();
  return out;
}

/** a stdout stand-in that holds 1 KiB and drains slowly, so writes must wait */
function slowSink() {
  const chunks: Buffer[] = [];
  let waits = 0;
  const sink = new Writable({
    highWaterMark: 1024,
    write(chunk, _encoding, done) {
      chunks.push(Buffer.from(chunk));
      setTimeout(done, 1);
    },
  });
  const write = sink.write.bind(sink);
  sink.write = ((chunk: Uint8Array) => {
    const ok = write(chunk);
    if (!ok) waits++;
    return ok;
  }) as typeof sink.write;
  return { sink, bytes: () => Buffer.concat(chunks), waits: () => waits };
}

describe('record file writers', () => {
  it('write the delimited form that the framer reads back, small and large records', async () => {
    const path = join(dir, 'records.pb');
    const writer = await RecordFileWriter.open(path);
    const bodies = [body(0, 1), body(5, 2), body(300, 3), body(600_000, 4), body(7, 5)];
    for (const b of bodies) await writer.write(b);
    await writer.close();
    expect(frames(readFileSync(path))).toEqual(bodies.map((b) => Array.from(b)));
    expect(writer.records).toBe(5);
    expect(writer.bytes).toBe(readFileSync(path).length);
  });

  it('write gzip when asked', async () => {
    const path = join(dir, 'records.pb.gz');
    const writer = await RecordFileWriter.open(path, { gzip: true });
    await writer.write(body(10, 1));
    await writer.close();
    const raw = readFileSync(path);
    expect(Array.from(raw.subarray(0, 2))).toEqual([0x1f, 0x8b]); // gzip magic, RFC 1952 section 2.3.1
    expect(frames(gunzipSync(raw))).toEqual([Array.from(body(10, 1))]);
  });

  it('keep the file under a temporary name until close, and leave nothing after abort', async () => {
    const path = join(dir, 'pending.pb');
    const writer = await RecordFileWriter.open(path);
    await writer.write(body(10, 1));
    expect(existsSync(path)).toBe(false);
    await writer.abort();
    expect(existsSync(path)).toBe(false);
    expect(readdirSync(dir).filter((n) => n.includes('pending'))).toEqual([]);
  });

  it('wait for a slow output to drain and deliver every byte in order', async () => {
    const slow = slowSink();
    const writer = await RecordFileWriter.open('-', { stdout: slow.sink });
    const bodies = Array.from({ length: 40 }, (_, k) => body(20_000, k));
    let mostQueued = 0; // bytes the output still held when a write let us go on
    for (const b of bodies) {
      await writer.write(b);
      mostQueued = Math.max(mostQueued, slow.sink.writableLength);
    }
    await writer.close();
    await new Promise<void>((resolve) => slow.sink.end(resolve));
    expect(slow.waits()).toBeGreaterThan(0);
    // without waiting for 'drain', the 800 kB would pile up in the output's queue
    expect(mostQueued).toBeLessThan(256 * 1024);
    expect(frames(slow.bytes())).toEqual(bodies.map((b) => Array.from(b)));
  });

  it('write gzip to stdout without ending stdout', async () => {
    const slow = slowSink();
    const writer = await RecordFileWriter.open('-', { stdout: slow.sink, gzip: true });
    await writer.write(body(100, 9));
    await writer.close();
    expect(slow.sink.writableEnded).toBe(false);
    await new Promise<void>((resolve) => slow.sink.end(resolve));
    expect(frames(gunzipSync(slow.bytes()))).toEqual([Array.from(body(100, 9))]);
  });

  it('text writer delivers lines in order through a slow output', async () => {
    const slow = slowSink();
    const writer = await TextFileWriter.open('-', { stdout: slow.sink });
    const lines = Array.from({ length: 5000 }, (_, k) => `${k},${'x'.repeat(k % 50)}\n`);
    for (const line of lines) await writer.write(line);
    await writer.close();
    await new Promise<void>((resolve) => slow.sink.end(resolve));
    expect(slow.bytes().toString('utf8')).toBe(lines.join(''));
  });

  it('report a file that cannot be created', async () => {
    await expect(RecordFileWriter.open(join(dir, 'no-such-dir', 'x.pb'))).rejects.toThrow(/ENOENT/);
  });
});
