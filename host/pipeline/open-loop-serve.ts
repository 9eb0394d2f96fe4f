// A worker's side of an open-loop run: it serves the event ring (event-ring.ts) until the ring
// is closed and empty. Per event:
//   claim the next event (only when idle, so events go to workers first come, first served)
//   -> copy its record out and read it (decode, validate, bin): done before the event is due
//      when the worker is idle early, so the file's format costs the event nothing
//   -> wait for its scheduled arrival: sleep (Atomics.wait) until SPIN_BEFORE_DUE_NS before
//      it, then spin; timed sleeps wake tens of µs late, a spin within a µs
//   -> start: cluster and encode (cluster-batch.ts) into the event's result slot in shared
//      memory (event-results.ts), mark it done and wake the main thread; a message follows
//      only for what a slot cannot hold (an invalid event's reason, jets bytes, ...)
// The thread never returns to its event loop while serving (postMessage needs none), and no
// timer of any event loop decides when an event starts. One input buffer serves every event.

import type { MessagePort } from 'node:worker_threads';
import { claimNext, copyRecord, DATA_LENGTH, DUE_NS, RECORD_OFFSET, ringViews, SEATED, SLOT_COUNT, SLOT_FIELDS, WORKER_HOLDS } from './event-ring.js';
import { needsExtras, ResultSlots } from './event-results.js';
import { finishBatch, readBatch, type WorkerHooks, type WorkerState } from './cluster-batch.js';
import { sharedClockNs } from './shared-clock.js';
import { ThreadCpuWait } from '../measure/thread-cpu-wait.js';
import { batchDataStart, batchViews, type BatchResult, type BatchTask, type EventMessage, type ServeOutcome, type ServeTask } from './worker-contract.js';

/**
 * How long before an event's arrival a waiting worker stops sleeping and spins. A timed
 * Atomics.wait wakes 50-100 µs late on an idle Linux machine (the kernel's default timer slack
 * is 50 µs); on a busy one, later. Measured with bench/pool.bench.ts (open loop section).
 */
export const SPIN_BEFORE_DUE_NS = 300_000;

/**
 * Waits until dueNs on the shared clock: a sleep for most of it, then a spin. The seat's CPU
 * wait is counted from here: a thread kept off the core while it spins or wakes starts late.
 */
export function waitForArrival(seat: RingSeat, dueNs: number): void {
  if (seat.cpuWaitPerEvent) seat.cpuWaitFromNs = seat.cpuWait.waitNs();
  waitUntil(dueNs, seat.sleeper);
}

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
  results: ResultSlots;
  holds: number;
  sleeper: Int32Array;
  dataStart: number;
  port: MessagePort;
  /** the input buffer every claimed event is copied into, grown to the largest record */
  input: ArrayBuffer;
  /** the claimed event, one object reused: valid until the next claim */
  claimed: ClaimedEvent;
  /** the engine name last sent to the main thread (a result with another one goes with a message) */
  engineSent: string | null;
  /**
   * this thread's wait for a CPU (thread-cpu-wait.ts): its value when the seat was taken, and
   * with cpuWaitPerEvent when the wait for the event's arrival began (-1 otherwise)
   */
  cpuWait: ThreadCpuWait;
  cpuWaitPerEvent: boolean;
  cpuWaitAtSeatNs: number;
  cpuWaitFromNs: number;
}

/** Takes a seat at the ring; the worker state is made ready for batches of one event. */
export function takeRingSeat(state: WorkerState, serve: ServeTask['serve']): RingSeat {
  if (state.validEvent.length < 1) {
    state.validEvent = new Int32Array(1);
    state.batchStart = new Int32Array(2);
  }
  const dataStart = batchDataStart(1);
  const input = new ArrayBuffer(dataStart + INPUT_BYTES_INITIAL);
  const views = ringViews(serve.ring);
  Atomics.add(views.control, SEATED, 1);
  Atomics.notify(views.control, SEATED);
  return {
    views, results: new ResultSlots(serve.results), holds: WORKER_HOLDS + serve.workerIndex,
    sleeper: new Int32Array(new SharedArrayBuffer(4)), dataStart, port: serve.port, input,
    claimed: { ordinal: 0, dueNs: 0, task: { batchIndex: 0, count: 1, dataStart, buffer: input }, claimedEarly: false },
    engineSent: null, ...threadCpuWaitFields(serve.cpuWaitPerEvent),
  };
}

function threadCpuWaitFields(perEvent: boolean): Pick<RingSeat, 'cpuWait' | 'cpuWaitPerEvent' | 'cpuWaitAtSeatNs' | 'cpuWaitFromNs'> {
  const cpuWait = new ThreadCpuWait();
  return { cpuWait, cpuWaitPerEvent: perEvent, cpuWaitAtSeatNs: cpuWait.waitNs(), cpuWaitFromNs: -1 };
}

/** Leaves the seat: what the serve task returns (the thread's wait for a CPU since it sat down). */
export function leaveRingSeat(seat: RingSeat, served: number): ServeOutcome {
  const nowNs = seat.cpuWait.waitNs();
  seat.cpuWait.close();
  return { served, cpuWaitNs: nowNs >= 0 && seat.cpuWaitAtSeatNs >= 0 ? nowNs - seat.cpuWaitAtSeatNs : -1 };
}

/** the input buffer's first size for a record; it grows to the largest record */
const INPUT_BYTES_INITIAL = 64 << 10;

export interface ClaimedEvent {
  ordinal: number;
  dueNs: number;
  /** the event as a batch of one, in the batch layout the batch code reads (worker-contract.ts) */
  task: BatchTask;
  /** claimed before it was due: the worker was idle and waits for the arrival itself */
  claimedEarly: boolean;
}

/**
 * Claims the next event and copies its record into the seat's input buffer; null once the ring
 * is closed and empty. The returned object and its buffer are the seat's, valid until the next claim.
 */
export function claimRingEvent(seat: RingSeat): ClaimedEvent | null {
  const { control, slots } = seat.views;
  const ordinal = claimNext(control);
  if (ordinal < 0) return null;
  Atomics.store(control, seat.holds, ordinal + 1);
  const at = (ordinal % SLOT_COUNT) * SLOT_FIELDS;
  const dueNs = slots[at + DUE_NS];
  const length = slots[at + DATA_LENGTH];
  if (seat.dataStart + length > seat.input.byteLength) seat.input = new ArrayBuffer(2 * (seat.dataStart + length));
  const batch = batchViews(seat.input, 1, seat.dataStart);
  batch.recordOffset[0] = slots[at + RECORD_OFFSET];
  batch.recordStart[0] = 0;
  batch.recordStart[1] = length;
  copyRecord(seat.views, ordinal, batch.data);
  const claimed = seat.claimed;
  claimed.ordinal = ordinal;
  claimed.dueNs = dueNs;
  claimed.task.batchIndex = ordinal;
  claimed.task.buffer = seat.input;
  claimed.claimedEarly = sharedClockNs() < dueNs;
  return claimed;
}

/**
 * Puts an event's outcome in its result slot and lets go of the event; what the slot cannot
 * hold goes first as a message (its jets bytes, and a result buffer of its own, moved).
 */
export function postRingOutcome(seat: RingSeat, message: EventMessage): void {
  const cpuWaitNowNs = seat.cpuWaitFromNs >= 0 ? seat.cpuWait.waitNs() : -1;
  message.cpuWaitNs = cpuWaitNowNs >= 0 ? cpuWaitNowNs - seat.cpuWaitFromNs : -1;
  seat.cpuWaitFromNs = -1;
  const result = message.result;
  const extras = needsExtras(result, seat.engineSent);
  if (extras) {
    const transfer: ArrayBuffer[] = [];
    if (result && result.buffer instanceof ArrayBuffer) transfer.push(result.buffer);
    if (result?.jetsBytes) transfer.push(result.jetsBytes.buffer as ArrayBuffer);
    seat.port.postMessage(message, transfer);
    if (result) seat.engineSent = result.engine;
  }
  seat.results.write(message.ordinal, message.startNs, message.claimedEarly, message.cpuWaitNs, result, extras);
  Atomics.store(seat.views.control, seat.holds, 0);
}

/**
 * Serves the ring until it is closed and every event has been claimed; returns the number of
 * events served and the thread's wait for a CPU meanwhile. `ensureClusterer` makes the clusterer again after a failed event dropped it.
 */
export function serveRing(state: WorkerState, serve: ServeTask['serve'], hooks: WorkerHooks, ensureClusterer: (state: WorkerState) => void): ServeOutcome {
  const seat = takeRingSeat(state, serve);
  let served = 0;
  try {
    served = serveSeat(seat, state, hooks, ensureClusterer);
  } catch (error) {
    seat.cpuWait.close();
    throw error;
  }
  // the port stays open: the host closes its end once every result is in
  return leaveRingSeat(seat, served);
}

function serveSeat(seat: RingSeat, state: WorkerState, hooks: WorkerHooks, ensureClusterer: (state: WorkerState) => void): number {
  let served = 0;
  for (let event = claimRingEvent(seat); event !== null; event = claimRingEvent(seat)) {
    const { ordinal, claimedEarly } = event;
    let message: EventMessage;
    let startNs = 0;
    try {
      ensureClusterer(state);
      const work = readBatch(state, event.task, seat.results.clear(ordinal));
      waitForArrival(seat, event.dueNs);
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
  return served;
}
