// jetlag index and run --shard k/n through the index: a shard reads only its own batches, the
// same batches as when it reads the whole file, so shard summaries and their merge are unchanged.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { main as indexMain } from '../host/cli/commands/index.js';
import { main as runMain } from '../host/cli/commands/run.js';
import { main as mergeMain } from '../host/cli/commands/merge.js';
import { readRecordIndex } from '../host/input/record-index.js';
import { indexedShardRecords } from '../host/input/shard-records.js';
import { openEventSource } from '../host/input/event-source.js';
import { shardInput } from '../host/pipeline/shard-input.js';
import { fakeIo } from './support/command-io.js';
import { toyEvents, writeEventFile } from './support/run-files.js';
import { tempDirForSuite, tempDirForTest } from './support/temp-dir.js';

describe('jetlag index', () => {
  const dir = tempDirForSuite('index');
  const file = writeEventFile(join(dir, 'toy.events'), toyEvents(50, 41, 5));

  it('lets a shard read exactly its batches, at the offsets the file was written with', async () => {
    expect(await indexMain([file.path, '-q'], fakeIo().io)).toBe(0);
    const index = readRecordIndex(file.path)!;
    expect(index.records).toBe(50);
    const seen: { recordNumber: number | undefined; offset: number }[] = [];
    for await (const record of indexedShardRecords(file.path, index, { batch: 4, shard: { index: 1, count: 3 } })) {
      seen.push({ recordNumber: record.recordNumber, offset: record.offset });
    }
    const expected = file.offsets.map((offset, k) => ({ recordNumber: k, offset })).filter(({ recordNumber }) => Math.floor(recordNumber / 4) % 3 === 1);
    expect(seen).toEqual(expected);
  });

  it('gives shard summaries equal to those of shards reading the whole file, and a merge of all events', async () => {
    const work = tempDirForTest('index-run');
    const plain = writeEventFile(join(work, 'plain.events'), toyEvents(50, 41, 5)).path;
    const indexed = writeEventFile(join(work, 'indexed.events'), toyEvents(50, 41, 5)).path;
    expect(await indexMain([indexed, '-q'], fakeIo().io)).toBe(0);
    const shardFiles: string[] = [];
    for (const k of [0, 1, 2]) {
      for (const [name, path] of [['plain', plain], ['indexed', indexed]]) {
        expect(await runMain([path, '--workers', '1', '--batch', '4', '--shard', `${k}/3`, '--json', join(work, `${name}-${k}.json`), '-q'], fakeIo().io)).toBe(0);
      }
      const fromPlain = JSON.parse(readFileSync(join(work, `plain-${k}.json`), 'utf8'));
      const fromIndex = JSON.parse(readFileSync(join(work, `indexed-${k}.json`), 'utf8'));
      for (const field of ['events', 'jets', 'towers', 'check', 'towersPerEvent', 'invalidEvents', 'shards'] as const) expect(fromIndex[field], field).toEqual(fromPlain[field]);
      expect(fromIndex.configuration.input.records).toBe(50);
      shardFiles.push(join(work, `indexed-${k}.json`));
    }
    expect(await mergeMain([...shardFiles, '--json', join(work, 'merged.json'), '-q'], fakeIo().io)).toBe(0);
    expect(JSON.parse(readFileSync(join(work, 'merged.json'), 'utf8')).events).toEqual({ read: 50, ok: 50, invalid: 0, failed: 0 });
  });

  it('is taken by a run of a shard, and not by a run of the whole file', async () => {
    const source = () => openEventSource(file.path);
    const shard = await shardInput({ input: file.path }, { batch: 4, shard: { index: 1, count: 3 } }, await source());
    expect(shard.recordsInFile).toBe(50);
    const whole = await shardInput({ input: file.path }, { batch: 4, shard: { index: 0, count: 1 } }, await source());
    expect(whole.recordsInFile).toBeNull();
    for (const input of [shard, whole]) for await (const record of input.records) void record; // let go of the files
  });

  it('refuses an index that no longer describes its file, in one line naming the index', async () => {
    const work = tempDirForTest('index-stale');
    const path = writeEventFile(join(work, 'toy.events'), toyEvents(20, 3, 5)).path;
    expect(await indexMain([path, '-q'], fakeIo().io)).toBe(0);
    writeEventFile(path, toyEvents(21, 3, 5));
    expect(() => readRecordIndex(path)).toThrow(new RegExp(`^${path}\\.index: does not describe ${path} as it is now .*: make it again with jetlag index ${path}$`));
  });

  it('refuses a gzip file, which cannot be entered in the middle', async () => {
    const work = tempDirForTest('index-gzip');
    const path = writeEventFile(join(work, 'toy.events.gz'), toyEvents(5, 3, 5), undefined, true).path;
    await expect(indexMain([path, '-q'], fakeIo().io)).rejects.toThrow(`${path}: gzip-compressed: an index needs a plain file`);
  });

  it('has run say once that shards of a gzip file each inflate the whole stream', async () => {
    const work = tempDirForTest('index-note');
    const path = writeEventFile(join(work, 'toy.events.gz'), toyEvents(12, 3, 5), undefined, true).path;
    const fake = fakeIo();
    expect(await runMain([path, '--workers', '1', '--batch', '4', '--shard', '0/2', '-q'], fake.io)).toBe(0);
    const lines = fake.stderr().split('\n').filter((line) => line.includes('inflates the whole stream'));
    expect(lines).toEqual([`jetlag run: ${path} is gzip-compressed: every shard inflates the whole stream to find its part; for shards that read only their part, decompress it once (gunzip -k ${path}), index it (jetlag index ${join(work, 'toy.events')}) and run the shards on ${join(work, 'toy.events')}`]);
  });
});
