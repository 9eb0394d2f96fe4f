// The worker pool: batches of raw event records out, results back in input order.
//
//   main thread                                            worker threads (piscina, N of them)
//   ─────────────────────────────────────────────          ───────────────────────────────────
//   file ─► framer ─► records ─► BatchBuilder                worker.ts, one engine per thread
//           (record-reader)      copies the records   move   ┌──────────────────────────────┐
//                                of one batch into ──────────► decode ► bin ► cluster ►     │
//                                one owned ArrayBuffer       │ check (sampled) ► encode     │
//                                                      move  │ per-stage ns, per event      │
//   summary ◄─ tally ◄─ in-order ◄───────────────────────────┤ result ArrayBuffer           │
//                       delivery (reorder by batch index)    └──────────────────────────────┘
//   at most maxInFlight batches are out (dispatched, not yet delivered), so memory stays flat
//
// The main thread only frames the stream and copies bytes; a piscina round trip costs tens of
// µs, so a batch of K events pays it once for K (see bench/pool.bench.ts for K). Record
// bytes are copied into an ArrayBuffer of the host's own and that buffer is transferred: a
// Node Buffer's .buffer may be the shared 8 KiB pool, which postMessage would clone whole. The
// worker hands the buffer back with its result and the host refills it (SpareBuffers): a fresh
// buffer of a few hundred KiB costs a page fault per 4 KiB page when first written.
// A task that rejects (the worker threw, or its thread died) is delivered as a failed batch
// with the reason; piscina starts a new thread for one that died. What travels each way, and
// the layout of both buffers, is written in worker-contract.ts.

import { Piscina } from 'piscina';
import { setFlagsFromString } from 'node:v8';
import { fileURLToPath } from 'node:url';
import { nowNs } from './arrivals.js';
import type { MessagePort } from 'node:worker_threads';
import { batchDataStart, batchViews, type BatchResult, type BatchTask, type ServeTask, type WorkerConfig } from './worker-contract.js';

// Node 20 can abort the whole process (a native assertion in node_platform.cc, exit 134) when a
// worker thread is torn down while V8 is still optimising its code on a background thread;
// seen in about one run in ten at pool shutdown on a busy machine, losing the summary. Optimising
// on the worker's own thread instead removes those background jobs (0 aborts in 40 runs against
// 3 in 30 without). V8 flags are process-wide and read when an isolate starts, so setting it
// here, before the pool starts its threads, covers every worker.
setFlagsFromString('--no-concurrent-recompilation');

// piscina loads a worker file with require() first and import() if that fails. Node 20.17+
// lets require() load ES modules; when that fails part way (seen while dist/ was being rebuilt
// beside a run), the import() after it stops the whole process with an internal assertion
// ("Unexpected status of a module that is imported again after being required"). Our worker is
// an ES module: with require() of ES modules off in the workers, piscina goes straight to
// import(). Older Node versions have neither the feature nor the flag.
const WORKER_EXEC_ARGV = process.allowedNodeEnvironmentFlags.has('--no-experimental-require-module')
  ? [...process.execArgv, '--no-experimental-require-module']
  : process.execArgv;

/** Where the compiled worker lives: beside this file in dist/, or dist/ when run from sources (tests). */
export function workerFile(): string {
  const here = import.meta.url;
  const url = here.endsWith('.ts') ? new URL('../../dist/host/pipeline/worker.js', here) : new URL('./worker.js', here);
  return fileURLToPath(url);
}

export interface SealedBatch {
  task: BatchTask;
  /** host's copy of each record's byte offset in the file, for error texts */
  recordOffsets: Float64Array;
}

/**
 * Batch buffers back from the workers, refilled instead of allocated anew. Measured on the
 * 2-core bench machine: a fresh 288 KiB buffer filled with 32 records took 1.5 ms of the main
 * thread (page faults of new memory), a refill of the same buffer 6 µs.
 */
export class SpareBuffers {
  private readonly buffers: ArrayBuffer[] = [];

  constructor(private readonly most: number) {}

  give(buffer: ArrayBuffer): void {
    // a detached buffer (transferred again) has length 0
    if (buffer.byteLength > 0 && this.buffers.length < this.most) this.buffers.push(buffer);
  }

  /** a spare of at least `bytes`, or null */
  take(bytes: number): ArrayBuffer | null {
    for (let k = 0; k < this.buffers.length; k++) {
      if (this.buffers[k].byteLength >= bytes) return this.buffers.splice(k, 1)[0];
    }
    return null;
  }
}

/** room a new batch buffer gets beyond its first batch, so that later batches fit when it comes back */
const BUFFER_HEADROOM = 1.25;

/**
 * Collects records and seals them into one owned ArrayBuffer: a spare one when one is large
 * enough, else a new one with headroom. Records are kept as the reader's views until sealing,
 * so each byte is copied once; the worker reads only up to the last record's end.
 */
export class BatchBuilder {
  private records: Uint8Array[] = [];
  private offsets: number[] = [];
  private bytes = 0;

  get count(): number {
    return this.records.length;
  }

  add(bytes: Uint8Array, offset: number): void {
    this.records.push(bytes);
    this.offsets.push(offset);
    this.bytes += bytes.length;
  }

  seal(batchIndex: number, spares?: SpareBuffers): SealedBatch {
    const count = this.records.length;
    const dataStart = batchDataStart(count);
    const bytes = dataStart + this.bytes;
    const buffer = spares?.take(bytes) ?? new ArrayBuffer(Math.ceil((bytes * BUFFER_HEADROOM) / 8) * 8);
    const { recordOffset, recordStart, data } = batchViews(buffer, count, dataStart);
    let at = 0;
    for (let k = 0; k < count; k++) {
      recordOffset[k] = this.offsets[k];
      recordStart[k] = at;
      data.set(this.records[k], at);
      at += this.records[k].length;
    }
    recordStart[count] = at;
    const sealed: SealedBatch = { task: { batchIndex, count, dataStart, buffer }, recordOffsets: recordOffset.slice() };
    this.records = [];
    this.offsets = [];
    this.bytes = 0;
    return sealed;
  }
}

export interface BatchOutcome {
  batchIndex: number;
  count: number;
  recordOffsets: Float64Array;
  /** ordinal of the batch's first record among the file's event records */
  firstRecord: number;
  /** per event: when its latency starts (ns on nowNs()'s clock) */
  startNs: Float64Array;
  /** when the result (or the failure) reached the main thread */
  finishedNs: number;
  /** open loop (one event): when a worker started on it, after its arrival (shared clock) */
  workerStartNs?: number;
  /**
   * open loop (one event): ns its worker's thread and the main thread waited for a CPU while
   * it was on them (thread-cpu-wait.ts); -1 where not measured
   */
  cpuWaitNs?: number;
  result: BatchResult | null;
  failure: string | null;
}

export interface PoolOptions {
  workers: number;
  /** batches dispatched but not yet delivered, at most */
  maxInFlight: number;
  config: WorkerConfig;
  /** the worker script (default workerFile()); tests substitute one with planted faults */
  workerFile?: string;
  /** called once per batch, in batch order */
  deliver: (outcome: BatchOutcome) => void;
}

export class BatchPool {
  private readonly piscina: Piscina;
  private readonly maxInFlight: number;
  private readonly deliver: (outcome: BatchOutcome) => void;
  private readonly settled = new Map<number, BatchOutcome>();
  private nextToDeliver = 0;
  private dispatched = 0;
  private delivered = 0;
  private waiters: (() => void)[] = [];
  /** first exception thrown by the deliver callback; re-thrown to the producer */
  private deliverError: unknown = null;
  /** batch buffers the workers handed back, for the feed to refill */
  readonly spares: SpareBuffers;

  constructor(options: PoolOptions) {
    if (!Number.isInteger(options.workers) || options.workers < 1) {
      throw new TypeError(`options.workers must be a positive integer, got ${options.workers}`);
    }
    this.maxInFlight = Math.max(1, options.maxInFlight);
    this.spares = new SpareBuffers(this.maxInFlight + 1);
    this.deliver = options.deliver;
    this.piscina = new Piscina({
      filename: options.workerFile ?? workerFile(),
      minThreads: options.workers,
      maxThreads: options.workers,
      idleTimeout: Infinity,
      workerData: options.config,
      execArgv: WORKER_EXEC_ARGV,
      recordTiming: false,
    });
  }

  get threads(): number {
    return this.piscina.threads.length;
  }

  /** batches out and not yet delivered */
  get outstanding(): number {
    return this.dispatched - this.delivered;
  }

  /** Runs one empty batch per thread so every worker has built its engine before timing starts. */
  async warmUp(tasks: number): Promise<void> {
    const runs: Promise<unknown>[] = [];
    for (let k = 0; k < tasks; k++) {
      const dataStart = batchDataStart(0);
      const buffer = new ArrayBuffer(dataStart);
      runs.push(this.piscina.run({ batchIndex: -1, count: 0, dataStart, buffer, warmUp: true } satisfies BatchTask, { transferList: [buffer] }));
    }
    await Promise.all(runs);
  }

  /**
   * Runs one task outside the batch order: an open-loop serve task, which holds its worker
   * for the whole run (open-loop-feed.ts).
   */
  runTask(task: ServeTask, transferList: MessagePort[]): Promise<unknown> {
    return this.piscina.run(task, { transferList: transferList as never });
  }

  /** Resolves when another batch may be dispatched. */
  async waitForRoom(): Promise<void> {
    while (this.outstanding >= this.maxInFlight) {
      await new Promise<void>((resolve) => this.waiters.push(resolve));
    }
    if (this.deliverError) throw this.deliverError;
  }

  /**
   * Sends one sealed batch (its buffer is transferred: unusable here afterwards). Batches
   * must be dispatched in batch-index order 0, 1, 2, ...
   */
  dispatch(sealed: SealedBatch, firstRecord: number, startNs: Float64Array): void {
    const { task } = sealed;
    if (task.batchIndex !== this.dispatched) {
      throw new Error(`batches must be dispatched in order: expected ${this.dispatched}, got ${task.batchIndex}`);
    }
    this.dispatched++;
    const outcome: BatchOutcome = {
      batchIndex: task.batchIndex,
      count: task.count,
      recordOffsets: sealed.recordOffsets,
      firstRecord,
      startNs,
      finishedNs: 0,
      result: null,
      failure: null,
    };
    this.piscina.run(task, { transferList: [task.buffer] }).then(
      (result: BatchResult) => {
        outcome.finishedNs = nowNs();
        if (result?.inputBuffer) {
          this.spares.give(result.inputBuffer);
          result.inputBuffer = undefined;
        }
        outcome.result = result;
        this.settle(outcome);
      },
      (error: unknown) => {
        outcome.finishedNs = nowNs();
        outcome.failure = describeFailure(error);
        this.settle(outcome);
      },
    );
  }

  private settle(outcome: BatchOutcome): void {
    this.settled.set(outcome.batchIndex, outcome);
    while (this.settled.has(this.nextToDeliver)) {
      const next = this.settled.get(this.nextToDeliver)!;
      this.settled.delete(this.nextToDeliver);
      this.nextToDeliver++;
      this.delivered++;
      try {
        this.deliver(next);
      } catch (error) {
        this.deliverError ??= error;
      }
    }
    const waiters = this.waiters;
    this.waiters = [];
    for (const wake of waiters) wake();
  }

  /** Resolves when every dispatched batch has been delivered. */
  async drain(): Promise<void> {
    while (this.outstanding > 0) {
      await new Promise<void>((resolve) => this.waiters.push(resolve));
    }
    if (this.deliverError) throw this.deliverError;
  }

  async close(): Promise<void> {
    await this.piscina.destroy();
  }
}

function describeFailure(error: unknown): string {
  if (error instanceof Error) {
    const text = error.message.split('\n')[0];
    return text || error.name;
  }
  return String(error);
}
