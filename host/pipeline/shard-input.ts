// Which records a run reads: all of the file, or, for a shard of a plain event file with a
// record index beside it, only the shard's own batches (input/shard-records.ts), in a closed
// loop or an open one (whose events keep their place in the file for the schedule). Without an
// index every shard frames the whole file (and of a gzip file inflates the whole stream) and
// drops the batches of other shards; shardReadingNote says so once.

import type { EventSource } from '../input/event-source.js';
import { isGzipPath, readRecordIndex } from '../input/record-index.js';
import type { RawRecord } from '../input/record-reader.js';
import { indexedShardRecords } from '../input/shard-records.js';

export interface ShardInput {
  records: AsyncIterable<RawRecord>;
  /** event records of the whole file as the index counts them (up to --events); null when read in full */
  recordsInFile: number | null;
}

interface ShardInputOptions {
  input: string;
  maxEvents?: number | null;
  maxRecordBytes?: number;
}

export async function shardInput(options: ShardInputOptions, plan: { batch: number; shard: { index: number; count: number } }, source: EventSource): Promise<ShardInput> {
  const whole = { records: source.records, recordsInFile: null };
  if (plan.shard.count === 1 || options.input === '-' || source.format !== 'events-file' || isGzipPath(options.input)) return whole;
  const index = readRecordIndex(options.input);
  if (index === null) return whole;
  await source.records.return(undefined);
  return {
    records: indexedShardRecords(options.input, index, { batch: plan.batch, shard: plan.shard, maxEvents: options.maxEvents }, source.label, options.maxRecordBytes),
    recordsInFile: Math.min(index.records, options.maxEvents ?? Infinity),
  };
}

/** One line for stderr when a shard must read the whole input to find its part; null otherwise. */
export function shardReadingNote(input: string, shard: { index: number; count: number } | undefined): string | null {
  if (shard === undefined || shard.count === 1 || input === '-') return null;
  let gzip: boolean;
  try {
    gzip = isGzipPath(input);
  } catch {
    return null; // the run itself names a file it cannot open
  }
  if (!gzip) return null;
  const plain = input.endsWith('.gz') ? input.slice(0, -3) : 'the decompressed file';
  return `${input} is gzip-compressed: every shard inflates the whole stream to find its part; `
    + `for shards that read only their part, decompress it once (gunzip -k ${input}), index it (jetlag index ${plain}) and run the shards on ${plain}`;
}

