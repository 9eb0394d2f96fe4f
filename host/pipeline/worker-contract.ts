// What the pool (pool.ts, main thread) and a pool worker (worker.ts) exchange: the worker's
// configuration, one message each way per batch, and the layouts of the two buffers those
// messages carry. Both sides build their views with the functions below, so the layout is
// written here only.
//
// Batch buffer (host -> worker, one transferred ArrayBuffer, BatchTask.buffer):
//   Float64 recordOffset[count]       byte offset of each record in the file (for error texts)
//   Uint32  recordStart[count + 1]    where each record starts in the record bytes; the last
//                                     entry is their total length
//   pad to a multiple of 8 bytes      (BatchTask.dataStart = batchDataStart(count))
//   Uint8   record bytes              the records of the batch, back to back, as read
//
// Result buffer (worker -> host, one transferred ArrayBuffer, BatchResult.buffer):
//   Float64 eventNumber[count]                 -1 for a record that broke before its number
//   Float64 stageNs[count * STAGE_COUNT]       event-major: event k's stage s at k * STAGE_COUNT + s
//                                              (the five of STAGE_INDEX, then the pileup chain's,
//                                              then grooming's)
//   Int32   towersClustered[count]             towers above the threshold (valid events)
//   Uint8   status[count]                      STATUS_OK or STATUS_INVALID
// Everything else (invalid events' reasons, check differences, jets bytes) travels as small
// plain fields of BatchResult beside the buffer.

import type { EngineName } from '../clustering/clusterers.js';
import type { JetDifference } from '../validate/bit-exact.js';
import type { ClusterSettings, Grid, GroomingSettings, PileupSettings } from '../types.js';
import type { MessagePort } from 'node:worker_threads';
import type { RingBuffers } from './event-ring.js';
import type { ResultBuffers } from './event-results.js';
import type { ExecBatchFigures, ExecWorkerConfig } from './exec-run-contract.js';

// ---- the stage table: one column per stage of an event's way through the worker ----------
// Named as measure/ reports them (STAGE_INDEX below maps those names to these columns).
export const STAGE_DECODE = 0;
export const STAGE_BIN = 1;
export const STAGE_CLUSTER = 2;
/** 0 when the event was not in the check sample */
export const STAGE_CHECK = 3;
/** 0 when no jets file is written */
export const STAGE_ENCODE = 4;
/**
 * The pileup chain's own stages (spec part two), parts of STAGE_CLUSTER, in the engine chain's
 * order (clustering/pileup/engine-chain.ts STAGE_*): column STAGE_PILEUP_FIRST + that stage.
 * 0 for a stage that is off, and for every event of a run without pileup steps.
 */
export const STAGE_PILEUP_FIRST = 5;
export const PILEUP_STAGE_COUNT = 5;
/** trimming and soft drop of the event's jets (spec section 12), part of STAGE_CLUSTER; 0 when off */
export const STAGE_GROOM = STAGE_PILEUP_FIRST + PILEUP_STAGE_COUNT;
export const STAGE_COUNT = STAGE_GROOM + 1;

/** The stage table's column of each stage, by the stage's reported name. */
export const STAGE_INDEX = {
  decode: STAGE_DECODE,
  bin: STAGE_BIN,
  cluster: STAGE_CLUSTER,
  check: STAGE_CHECK,
  encode: STAGE_ENCODE,
} as const;

export const STATUS_OK = 0;
export const STATUS_INVALID = 1;

/** Given to every worker when the pool starts (piscina's workerData). */
export interface WorkerConfig {
  grid: Grid;
  settings: ClusterSettings;
  /** the pileup steps around the clustering (spec part two); null or absent: none */
  pileup?: PileupSettings | null;
  /** trimming and soft drop of each reported jet (spec section 12); null or absent: none */
  grooming?: GroomingSettings | null;
  /** the engine or the reference; never swapped silently for the other */
  engine: EngineName;
  /** fraction of events compared with the reference: 1 all, 0 none */
  checkFraction: number;
  checkSeed: number;
  /** encode each event's jets for a jets file */
  encodeJets: boolean;
  /**
   * a timed pass: the reference does not run here; the records of the check sample come back
   * in BatchResult.sampled, and are checked after the timing (check-pass.ts)
   */
  checkApart?: boolean;
  /** `run --engine exec:…`: each worker's engine is this program (exec-batch.ts); the check runs in the worker */
  exec?: ExecWorkerConfig | null;
}

/** Host -> worker, one per batch. */
export interface BatchTask {
  batchIndex: number;
  count: number;
  dataStart: number;
  buffer: ArrayBuffer;
  /** an empty batch that warms the engine up (pool start) */
  warmUp?: boolean;
}

export interface InvalidEntry {
  /** the event's place in its batch */
  index: number;
  reason: string;
}

/** Worker -> host, one per batch. */
export interface BatchResult {
  batchIndex: number;
  count: number;
  engine: string;
  /** a transferred buffer; in an open loop, the event's result slot (event-results.ts) */
  buffer: ArrayBuffer | SharedArrayBuffer;
  /** where the result buffer starts in `buffer` (0 when absent) */
  bufferOffset?: number;
  invalid: InvalidEntry[];
  differences: (JetDifference & { event: number })[];
  /** the record bytes of each disagreeing event, for a repro file */
  disagreeing: { event: number; bytes: Uint8Array }[];
  checked: number;
  agreeing: number;
  jets: number;
  towersOffered: number;
  towersBelowThreshold: number;
  towersOutsideAcceptance: number;
  /** checkApart: the records of this batch's events in the check sample, for the check pass */
  sampled: { index: number; event: number; bytes: Uint8Array }[];
  /** delimited jets records of this batch's events in order, when encodeJets is on */
  jetsBytes: Uint8Array | null;
  /** an engine program's figures (exec-run-contract.ts); absent for the in-process engines */
  exec?: ExecBatchFigures;
  /** the task's own buffer, handed back (transferred) for the host to refill (pool.ts SpareBuffers) */
  inputBuffer?: ArrayBuffer;
}

/**
 * Host -> worker, once per worker of an open-loop run: serve the event ring (event-ring.ts)
 * until it is closed and empty, one EventMessage per event on `port`; resolves with the number
 * of events served.
 */
export interface ServeTask {
  serve: {
    ring: RingBuffers;
    /** where each event's result goes (event-results.ts) */
    results: ResultBuffers;
    /** this worker's place in the ring's WORKER_HOLDS table */
    workerIndex: number;
    port: MessagePort;
    /** read the thread's wait for a CPU per event (EventMessage.cpuWaitNs), not only over the whole serve */
    cpuWaitPerEvent: boolean;
  };
}

/** Worker -> host, at the end of a serve task: events served, and the thread's wait for a CPU meanwhile (ns; -1 unknown). */
export interface ServeOutcome {
  served: number;
  cpuWaitNs: number;
}

/**
 * Worker -> host, per open-loop event: its result slot (event-results.ts), and this message on
 * the serve task's port only for a result the slot cannot hold whole.
 */
export interface EventMessage {
  /** the event's place in the run's open-loop order */
  ordinal: number;
  /** when the worker started on it (after waiting for its arrival), shared clock ns */
  startNs: number;
  /** the worker claimed it before it was due, and waited for it */
  claimedEarly: boolean;
  /** one-event result; null when the worker failed on it */
  result: BatchResult | null;
  failure: string | null;
  /**
   * ns the worker's thread spent waiting for a CPU (runnable, another thread on the core) from
   * the start of its wait for the event's arrival to its result's write; -1 where not measured
   * (thread-cpu-wait.ts; only with cpuWaitPerEvent). Set by postRingOutcome.
   */
  cpuWaitNs?: number;
}

/** Where the record bytes start in a batch buffer of `count` records. */
export function batchDataStart(count: number): number {
  return Math.ceil((8 * count + 4 * (count + 1)) / 8) * 8;
}

/** Views into a batch buffer (the host fills them, the worker reads them). */
export function batchViews(buffer: ArrayBuffer, count: number, dataStart: number) {
  const recordOffset = new Float64Array(buffer, 0, count);
  const recordStart = new Uint32Array(buffer, 8 * count, count + 1);
  const data = new Uint8Array(buffer, dataStart);
  return { recordOffset, recordStart, data };
}

export function resultBytes(count: number): number {
  return 8 * count + 8 * count * STAGE_COUNT + 4 * count + count;
}

/** Views into a result buffer starting at byteOffset (the worker fills them, the host reads them). */
export function resultViews(buffer: ArrayBufferLike, count: number, byteOffset = 0) {
  let at = byteOffset;
  const eventNumber = new Float64Array(buffer, at, count); at += 8 * count;
  const stageNs = new Float64Array(buffer, at, count * STAGE_COUNT); at += 8 * count * STAGE_COUNT;
  const towersClustered = new Int32Array(buffer, at, count); at += 4 * count;
  const status = new Uint8Array(buffer, at, count);
  return { eventNumber, stageNs, towersClustered, status };
}
