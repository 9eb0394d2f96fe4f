// An open-loop shard (`run --rate … --shard k/n`) of an indexed plain event file reads only its
// own batches, as a closed-loop shard does: a record of another shard spoiled on disk (in the
// middle of the file, where the index's fingerprint does not look) is never read by it, while
// the shard that owns it stops there. Shards of a gzip file say that each inflates the whole
// stream. Invented events from the toy generator.

import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as indexMain } from '../host/cli/commands/index.js';
import { main as runMain } from '../host/cli/commands/run.js';
import { readRecordIndex } from '../host/input/record-index.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite, tempDirForTest } from './support/temp-dir.js';

const EVENTS = 240;
const BATCH = 4;
/** the first and last 64 KiB of the file are in the index's fingerprint (record-index.ts) */
const FINGERPRINT_SPAN_BYTES = 64 * 1024;

function shardOf(record: number): number {
  return Math.floor(record / BATCH) % 2;
}

describe('an open-loop shard of an indexed file', () => {
  const dir = tempDirForSuite('shard-open-loop');
  const path = join(dir, 'toy.events');
  const written = writeEventFile(path, toyEvents(EVENTS, 17, 30));
  const fileBytes = readFileSync(path).length;
  // a record of shard 0 well inside the middle of the file
  const spoiled = written.offsets.findIndex((offset, k) => k + 1 < EVENTS && shardOf(k) === 0
    && offset > FINGERPRINT_SPAN_BYTES && written.offsets[k + 1] < fileBytes - FINGERPRINT_SPAN_BYTES);

  it('is laid out as the test needs: a file past both fingerprint spans, a record in between', async () => {
    expect(spoiled).toBeGreaterThan(0);
    expect(await indexMain([path, '-q'], fakeIo().io)).toBe(0);
    const bytes = readFileSync(path);
    // every byte of the record, its length varint included, set to 0xff: a varint longer than 10 bytes
    bytes.fill(0xff, written.offsets[spoiled], written.offsets[spoiled + 1]);
    writeFileSync(path, bytes);
    expect(readRecordIndex(path)?.records).toBe(EVENTS);
  });

  it('of the other shard reads its own batches whole and never meets the spoiled record', async () => {
    const json = join(dir, 'shard-1.json');
    const fake = fakeIo();
    const code = await runMain([path, '--rate', '4000', '--check', 'none', '--workers', '1', '--batch', String(BATCH), '--shard', '1/2', '--json', json, '-q'], fake.io);
    expect(fake.stderr()).toBe('');
    expect(code).toBe(0);
    const summary = JSON.parse(readFileSync(json, 'utf8'));
    const own = Array.from({ length: EVENTS }, (_, k) => k).filter((k) => shardOf(k) === 1).length;
    expect(summary.partial).toBe(false);
    expect(summary.events).toEqual({ read: own, ok: own, invalid: 0, failed: 0 });
    expect(summary.configuration.arrival.mode).toBe('fixed'); // an open loop at a fixed rate
    expect(summary.configuration.input.records).toBe(EVENTS);
  });

  it('that owns the spoiled record stops there, naming its byte', async () => {
    const fake = fakeIo();
    await runMain([path, '--rate', '4000', '--check', 'none', '--workers', '1', '--batch', String(BATCH), '--shard', '0/2', '-q'], fake.io);
    expect(fake.stderr()).toContain(`${path}, byte ${written.offsets[spoiled]}: `);
  });
});

describe('an open-loop shard of a gzip file', () => {
  it('says once that every shard inflates the whole stream', async () => {
    const work = tempDirForTest('shard-open-loop-gzip');
    const path = writeEventFile(join(work, 'toy.events.gz'), toyEvents(12, 3, 5), undefined, true).path;
    const fake = fakeIo();
    expect(await runMain([path, '--rate', '4000', '--check', 'none', '--workers', '1', '--batch', '4', '--shard', '1/2', '-q'], fake.io)).toBe(0);
    expect(fake.stderr().split('\n').filter((line) => line.includes('inflates the whole stream'))).toEqual([
      `jetlag run: ${path} is gzip-compressed: every shard inflates the whole stream to find its part; for shards that read only their part, decompress it once (gunzip -k ${path}), index it (jetlag index ${join(work, 'toy.events')}) and run the shards on ${join(work, 'toy.events')}`,
    ]);
  });
});
