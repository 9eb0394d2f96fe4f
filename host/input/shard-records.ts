// One shard's records of a plain event file, read through its record index: only the byte
// ranges of the shard's own batches are read and framed. The shard's batches are the same as
// when every record is read (every n-th group of `batch` records, starting with group k), and
// each record carries its place in the file, so counts, check samples and merges are unchanged.

import { open } from 'node:fs/promises';
import { InputError } from '../errors.js';
import { DEFAULT_MAX_RECORD_BYTES, RecordFramer } from './record-framer.js';
import type { RawRecord } from './record-reader.js';
import type { RecordIndex } from './record-index.js';

/** largest single read; a batch larger than this is read in pieces */
const READ_PIECE_BYTES = 1 << 20;

export interface ShardPlan {
  batch: number;
  shard: { index: number; count: number };
  /** stop before this record number (of the whole file), as --events does */
  maxEvents?: number | null;
}

export async function* indexedShardRecords(path: string, index: RecordIndex, plan: ShardPlan, label = path, maxRecordBytes = DEFAULT_MAX_RECORD_BYTES): AsyncGenerator<RawRecord> {
  const { batch, shard } = plan;
  const records = Math.min(index.records, plan.maxEvents ?? Infinity);
  const file = await open(path, 'r');
  try {
    for (let group = shard.index; group * batch < records; group += shard.count) {
      const firstRecord = group * batch;
      const endRecord = Math.min(firstRecord + batch, records);
      const start = index.offsets[firstRecord];
      const end = index.offsets[endRecord];
      const framer = new RecordFramer(maxRecordBytes);
      const found: RawRecord[] = [];
      for (let at = start; at < end; at += READ_PIECE_BYTES) {
        const length = Math.min(READ_PIECE_BYTES, end - at);
        // a buffer of its own per piece: yielded records are views into it and are kept
        const piece = Buffer.allocUnsafe(length);
        const { bytesRead } = await file.read(piece, 0, length, at);
        if (bytesRead < length) throw new InputError(label, `file ends inside the range its index gives (${length - bytesRead} bytes short): make the index again`, undefined, at + bytesRead);
        framer.feed(piece, (bytes, offset) => { found.push({ bytes, offset: start + offset, recordNumber: firstRecord + found.length }); });
      }
      framer.finish();
      if (framer.problem) throw new InputError(label, framer.problem.detail, undefined, start + framer.problem.offset);
      if (found.length !== endRecord - firstRecord) {
        throw new InputError(label, `${found.length} records between bytes ${start} and ${end}, its index says ${endRecord - firstRecord}: make the index again`, undefined, start);
      }
      for (const record of found) yield record;
    }
  } finally {
    await file.close();
  }
}
