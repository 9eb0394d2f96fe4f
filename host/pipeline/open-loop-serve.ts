// A worker's side of an open-loop run: it serves the event ring (event-ring.ts) until the ring
// is closed and empty. Per event:
//   claim the next event (only when idle, so events go to workers first come, first served)
//   -> copy its record out and read it (decode, validate, bin): done before the event is due
//      when the worker is idle early, so the file's format costs the event nothing
//   -> wait for its scheduled arrival: sleep (Atomics.wait) until SPIN_BEFORE_DUE_NS before
//      it, then spin; timed sleeps wake tens of µs late, a spin within a µs
//   -> start: cluster and encode (cluster-batch.ts), post the result to the main thread
// The thread never returns to its event loop while serving: results go out by postMessage,
// which needs none, and no timer of any event loop decides when an event starts.

import type { MessagePort } from 'node:worker_threads';
import { claimNext, copyRecord, DATA_LENGTH, DUE_NS, RECORD_OFFSET, ringViews, SLOT_COUNT, SLOT_FIELDS, WORKER_HOLDS } from './event-ring.js';
import { finishBatch, readBatch, type WorkerHooks, type WorkerState } from './cluster-batch.js';
import { sharedClockNs } from './shared-clock.js';
import { batchDataStart, batchViews, type BatchResult, type BatchTask, type EventMessage, type ServeTask } from './worker-contract.js';

/**
 * How long before an event's arrival a waiting worker stops sleeping and spins. A timed
 * Atomics.wait wakes 50-100 µs late on an idle Linux machine (the kernel's default timer slack
 * is 50 µs); on a busy one, later. Measured with bench/pool.bench.ts (open loop section).
 */
export const SPIN_BEFORE_DUE_NS = 300_000;

/** Waits until dueNs on the shared clock: a sleep for most of it, then a spin. */
export function waitUntil(dueNs: number, sleeper: Int32Array): void {
  const sleepNs = dueNs - SPIN_BEFORE_DUE_NS - sharedClockNs();
  if (sleepNs > 0) Atomics.wait(sleeper, 0, 0, sleepNs / 1e6);
  while (sharedClockNs() < dueNs) { /* spin: the last stretch before the arrival */ }
}

export function describeFailure(error: unknown): string {
  if (error instanceof Error) return error.message.split('\n')[0] || error.name;
  return String(error);
}

/** One worker's hold on the ring: its views, its hold word and its sleeper. */
export interface RingSeat {
  views: ReturnType<typeof ringViews>;
  holds: number;
  sleeper: Int32Array;
  dataStart: number;
  port: MessagePort;
}

/** Takes a seat at the ring; the worker state is made ready for batches of one event. */
export function takeRingSeat(state: WorkerState, serve: ServeTask['serve']): RingSeat {
  if (state.validEvent.length < 1) {
    state.validEvent = new Int32Array(1);
    state.batchStart = new Int32Array(2);
  }
  return { views: ringViews(serve.ring), holds: WORKER_HOLDS + serve.workerIndex, sleeper: new Int32Array(new SharedArrayBuffer(4)), dataStart: batchDataStart(1), port: serve.port };
}

export interface ClaimedEvent {
  ordinal: number;
  dueNs: number;
  /** the event as a batch of one, in the batch layout the batch code reads (worker-contract.ts) */
  task: BatchTask;
  /** claimed before it was due: the worker was idle and waits for the arrival itself */
  claimedEarly: boolean;
}

/** Claims the next event and copies its record out; null once the ring is closed and empty. */
export function claimRingEvent(seat: RingSeat): ClaimedEvent | null {
  const { control, slots } = seat.views;
  const ordinal = claimNext(control);
  if (ordinal < 0) return null;
  Atomics.store(control, seat.holds, ordinal + 1);
  const at = (ordinal % SLOT_COUNT) * SLOT_FIELDS;
  const dueNs = slots[at + DUE_NS];
  const length = slots[at + DATA_LENGTH];
  const buffer = new ArrayBuffer(seat.dataStart + length);
  const batch = batchViews(buffer, 1, seat.dataStart);
  batch.recordOffset[0] = slots[at + RECORD_OFFSET];
  batch.recordStart[0] = 0;
  batch.recordStart[1] = length;
  copyRecord(seat.views, ordinal, batch.data);
  const claimedEarly = sharedClockNs() < dueNs;
  return { ordinal, dueNs, task: { batchIndex: ordinal, count: 1, dataStart: seat.dataStart, buffer }, claimedEarly };
}

/** Posts an event's outcome to the main thread (its buffers moved) and lets go of the event. */
export function postRingOutcome(seat: RingSeat, message: EventMessage): void {
  const result = message.result;
  const transfer = result ? (result.jetsBytes ? [result.buffer, result.jetsBytes.buffer as ArrayBuffer] : [result.buffer]) : [];
  seat.port.postMessage(message, transfer);
  Atomics.store(seat.views.control, seat.holds, 0);
}

/**
 * Serves the ring until it is closed and every event has been claimed; returns the number of
 * events served. `ensureClusterer` makes the clusterer again after a failed event dropped it.
 */
export function serveRing(state: WorkerState, serve: ServeTask['serve'], hooks: WorkerHooks, ensureClusterer: (state: WorkerState) => void): number {
  const seat = takeRingSeat(state, serve);
  let served = 0;
  for (let event = claimRingEvent(seat); event !== null; event = claimRingEvent(seat)) {
    const { ordinal, claimedEarly } = event;
    let message: EventMessage;
    let startNs = 0;
    try {
      ensureClusterer(state);
      const work = readBatch(state, event.task);
      waitUntil(event.dueNs, seat.sleeper);
      startNs = sharedClockNs();
      const result: BatchResult = finishBatch(state, work, hooks);
      message = { ordinal, startNs, claimedEarly, result, failure: null };
    } catch (error) {
      // the clusterer may be poisoned (a wasm trap leaves its memory in an unknown state)
      state.clusterer = null;
      message = { ordinal, startNs: startNs || sharedClockNs(), claimedEarly, result: null, failure: describeFailure(error) };
    }
    postRingOutcome(seat, message);
    served++;
  }
  // the port stays open: the host closes its end once every result is in
  return served;
}
