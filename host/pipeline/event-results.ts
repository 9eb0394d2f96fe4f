// The open loop's way back: each event's result in a slot of shared memory, written by the
// worker that ran it and read by the main thread, instead of a message per event. A message
// is received only after the main thread's event loop has woken, taken it off the port and
// deserialised it; a slot is read where it lies, the main thread waking once on Atomics.waitAsync
// for whatever results are ready by then.
//
// Two shared buffers, their layout written here only:
//   slots  per ring slot (event j in slot j % SLOT_COUNT, as in event-ring.ts), RESULT_SLOT_BYTES:
//     [0, RESULT_VIEW_BYTES)   the result buffer of a batch of one (worker-contract.ts resultViews)
//     then Float64 fields:
//     [START_NS]               when the worker started on the event, shared clock ns
//     [CLAIMED_EARLY]          1: the worker held the event before it was due and waited for it
//     [JETS], [TOWERS_OFFERED], [TOWERS_BELOW_THRESHOLD], [TOWERS_OUTSIDE_ACCEPTANCE]
//     [CPU_WAIT_NS]            the worker's thread's wait for a CPU while on the event, -1 unknown
//     [EXTRAS]                 1: a message on the serve task's port carries the rest of the
//                              result (an invalid event's reason, the check sample's record,
//                              jets bytes, the engine's name, a failure, a program's figures);
//                              the result is complete when both are on the main thread
//   flags  Int32[1 + SLOT_COUNT]
//     [WRITTEN]                results written so far (the word the main thread waits on)
//     [DONE + slot]            ordinal + 1 once the slot holds that event's result
// A slot is written again only after its event was delivered: the reader keeps fewer than
// SLOT_COUNT events published and not delivered (open-loop-feed.ts).

import { SLOT_COUNT } from './event-ring.js';
import { resultBytes, type BatchResult, type EventMessage } from './worker-contract.js';

export const RESULT_VIEW_BYTES = Math.ceil(resultBytes(1) / 8) * 8;
export const START_NS = 0;
export const CLAIMED_EARLY = 1;
export const JETS = 2;
export const TOWERS_OFFERED = 3;
export const TOWERS_BELOW_THRESHOLD = 4;
export const TOWERS_OUTSIDE_ACCEPTANCE = 5;
export const EXTRAS = 6;
export const CPU_WAIT_NS = 7;
const RESULT_FIELDS = 8;
export const RESULT_SLOT_BYTES = RESULT_VIEW_BYTES + 8 * RESULT_FIELDS;

export const WRITTEN = 0;
export const DONE = 1;

export interface ResultBuffers {
  slots: SharedArrayBuffer;
  flags: SharedArrayBuffer;
}

export function makeResultBuffers(): ResultBuffers {
  return { slots: new SharedArrayBuffer(SLOT_COUNT * RESULT_SLOT_BYTES), flags: new SharedArrayBuffer(4 * (DONE + SLOT_COUNT)) };
}

/** Where event `ordinal`'s result buffer starts in the slots buffer. */
export function resultOffset(ordinal: number): number {
  return (ordinal % SLOT_COUNT) * RESULT_SLOT_BYTES;
}

/** Views of both buffers, for either side. */
export class ResultSlots {
  readonly fields: Float64Array;
  readonly flags: Int32Array;
  /** every slot's bytes, for clearing one without a view per event */
  private readonly bytes: Uint8Array;

  constructor(readonly buffers: ResultBuffers) {
    this.fields = new Float64Array(buffers.slots);
    this.flags = new Int32Array(buffers.flags);
    this.bytes = new Uint8Array(buffers.slots);
  }

  private fieldAt(ordinal: number): number {
    return (resultOffset(ordinal) + RESULT_VIEW_BYTES) / 8;
  }

  /** Worker side: an empty result buffer for the event, in its slot (the batch code fills it). */
  clear(ordinal: number): { buffer: SharedArrayBuffer; byteOffset: number } {
    const byteOffset = resultOffset(ordinal);
    this.bytes.fill(0, byteOffset, byteOffset + RESULT_SLOT_BYTES);
    return { buffer: this.buffers.slots, byteOffset };
  }

  /**
   * Worker side: the event's figures beside its result buffer, then the slot marked done and
   * the main thread woken. `result` null (a failure) or not in the slot: extras must be 1.
   */
  write(ordinal: number, startNs: number, claimedEarly: boolean, cpuWaitNs: number, result: BatchResult | null, extras: boolean): void {
    const at = this.fieldAt(ordinal);
    const { fields, flags } = this;
    fields[at + START_NS] = startNs;
    fields[at + CPU_WAIT_NS] = cpuWaitNs;
    fields[at + CLAIMED_EARLY] = claimedEarly ? 1 : 0;
    fields[at + JETS] = result ? result.jets : 0;
    fields[at + TOWERS_OFFERED] = result ? result.towersOffered : 0;
    fields[at + TOWERS_BELOW_THRESHOLD] = result ? result.towersBelowThreshold : 0;
    fields[at + TOWERS_OUTSIDE_ACCEPTANCE] = result ? result.towersOutsideAcceptance : 0;
    fields[at + EXTRAS] = extras ? 1 : 0;
    Atomics.store(flags, DONE + (ordinal % SLOT_COUNT), ordinal + 1);
    Atomics.add(flags, WRITTEN, 1);
    Atomics.notify(flags, WRITTEN, 1);
  }

  /** Main side: whether event `ordinal`'s result is in its slot. */
  isDone(ordinal: number): boolean {
    return Atomics.load(this.flags, DONE + (ordinal % SLOT_COUNT)) === ordinal + 1;
  }

  /** Main side: whether a message carries part of the result. */
  hasExtras(ordinal: number): boolean {
    return this.fields[this.fieldAt(ordinal) + EXTRAS] === 1;
  }

  /**
   * Main side: the event's outcome as a message, for an event with no extras; the object and
   * its result are reused (delivery reads them before it returns), its buffer is the slot.
   */
  read(ordinal: number, into: EventMessage & { result: BatchResult }, engine: string): EventMessage {
    const at = this.fieldAt(ordinal);
    const { fields } = this;
    const result = into.result;
    into.ordinal = ordinal;
    into.startNs = fields[at + START_NS];
    into.claimedEarly = fields[at + CLAIMED_EARLY] === 1;
    into.cpuWaitNs = fields[at + CPU_WAIT_NS];
    into.failure = null;
    result.batchIndex = ordinal;
    result.engine = engine;
    result.bufferOffset = resultOffset(ordinal);
    result.jets = fields[at + JETS];
    result.towersOffered = fields[at + TOWERS_OFFERED];
    result.towersBelowThreshold = fields[at + TOWERS_BELOW_THRESHOLD];
    result.towersOutsideAcceptance = fields[at + TOWERS_OUTSIDE_ACCEPTANCE];
    return into;
  }

  /** Main side: a message and result object for read() to fill, made once. */
  reusableMessage(): EventMessage & { result: BatchResult } {
    return {
      ordinal: 0, startNs: 0, claimedEarly: false, failure: null, cpuWaitNs: -1,
      result: {
        batchIndex: 0, count: 1, engine: '', buffer: this.buffers.slots, bufferOffset: 0,
        invalid: [], differences: [], disagreeing: [], sampled: [],
        checked: 0, agreeing: 0, jets: 0, towersOffered: 0, towersBelowThreshold: 0, towersOutsideAcceptance: 0, jetsBytes: null,
      },
    };
  }
}

/** Whether a result needs a message beside its slot: anything the slot does not hold. */
export function needsExtras(result: BatchResult | null, engineSent: string | null): boolean {
  if (result === null) return true;
  if (typeof result.bufferOffset !== 'number' || !(result.buffer instanceof SharedArrayBuffer)) return true;
  return result.engine !== engineSent || result.invalid.length > 0 || result.sampled.length > 0 || result.jetsBytes !== null ||
    result.differences.length > 0 || result.disagreeing.length > 0 || result.checked > 0 || result.exec !== undefined;
}

