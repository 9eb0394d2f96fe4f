// The reading side of a closed-loop run: event records from the file, this shard's share of
// them, gathered into batches and handed to the pool; a batch goes when it is full. (An open
// loop dispatches each event at its arrival: open-loop-feed.ts.)

import { InputError } from '../errors.js';
import type { RawRecord } from '../input/record-reader.js';
import { nowNs } from './arrivals.js';
import { BatchBuilder, type BatchPool } from './pool.js';
import type { RunDelivery } from './run-delivery.js';

export interface FeedPlan {
  /** events per batch, at most */
  batch: number;
  shard: { index: number; count: number };
  /** stop after this many event records (of the whole file, before sharding) */
  maxEvents: number | null | undefined;
  signal: AbortSignal | undefined;
}

export class RecordFeed {
  /** event records seen in the file */
  records = 0;
  /** byte offset of the last record read */
  lastOffset = 0;
  /** why the run stopped before the end of its input, if it did */
  partialReason: string | null = null;
  inputError: InputError | null = null;
  private readonly builder = new BatchBuilder();
  private dispatchIndex = 0;
  private builderFirstRecord = 0;

  constructor(
    private readonly plan: FeedPlan,
    private readonly pool: BatchPool,
    private readonly delivery: RunDelivery,
  ) {}

  /** Reads records until the input ends, breaks or the run is stopped; dispatches every batch. */
  async feed(records: AsyncIterable<RawRecord>): Promise<void> {
    const { batch, shard, maxEvents, signal } = this.plan;
    const builder = this.builder;
    try {
      for await (const record of records) {
        if (signal?.aborted) { this.partialReason = 'interrupted: reading stopped, batches in flight drained'; break; }
        if (maxEvents != null && (record.recordNumber ?? this.records) >= maxEvents) break;
        // a shard read through a record index gets only its own records, each with its place in the file
        const record0 = record.recordNumber ?? this.records;
        this.records = record0 + 1;
        this.lastOffset = record.offset;
        // shards take every n-th group of `batch` records, whatever the run's timing
        if (Math.floor(record0 / batch) % shard.count !== shard.index) continue;
        if (builder.count === 0) this.builderFirstRecord = record0;
        builder.add(record.bytes, record.offset);
        if (builder.count >= batch) await this.send();
      }
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      // the rest of the file is unreadable: keep what came before it
      this.inputError = error;
      this.partialReason = `input unreadable from here on: ${error.message}`;
    }
    if (builder.count > 0) await this.send();
  }

  /** Seals the builder's batch and dispatches it once the jets file and the pool have room. */
  private async send(): Promise<void> {
    await this.delivery.jetsWritten();
    await this.pool.waitForRoom();
    const sealed = this.builder.seal(this.dispatchIndex++, this.pool.spares);
    // when each event was handed over (the batch's events have no arrivals of their own)
    const starts = new Float64Array(sealed.task.count).fill(nowNs());
    this.pool.dispatch(sealed, this.builderFirstRecord, starts);
  }
}
