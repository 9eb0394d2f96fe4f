// The open loop's hand-over: a ring of event records in shared memory, filled ahead of time by
// the main thread (the reader) and emptied by the workers, each of which claims the next event
// when it is idle and waits for that event's scheduled arrival itself (open-loop-serve.ts). No
// thread hop lies between an event falling due and a worker starting on it, and no timer of the
// main thread's event loop (millisecond-coarse) decides when an event goes.
//
// Three shared buffers, their layout written here only (the reader's and the workers' views
// both come from ringViews):
//   control  Int32[CONTROL_INTS]
//     [PUBLISHED]          events published so far (ordinals 0 .. PUBLISHED-1 are readable)
//     [CLAIMED]            events claimed so far by workers (claims are in ordinal order)
//     [CLOSED]             1 once the reader has published its last event
//     [SEATED]             workers that have taken their seat at the ring (the run's clock
//                          starts once all have: a worker's start-up is not an event's wait)
//     [WORKER_HOLDS + w]   ordinal + 1 of the event worker w holds, 0 when none (if a worker's
//                          thread dies, the reader fails the event it held)
//   slots    Float64[SLOT_COUNT * SLOT_FIELDS], event j in slot j % SLOT_COUNT:
//     [DUE_NS]             scheduled arrival on the shared clock (shared-clock.ts)
//     [DATA_START]         where the record's bytes start in data
//     [DATA_LENGTH]        the record's length in bytes
//     [RECORD_OFFSET]      the record's byte offset in the input (for error texts)
//   copied   Int32[SLOT_COUNT]   ordinal + 1 once a worker has copied the slot's record out:
//                                its bytes and the slot may then be reused
//   data     Uint8[...]          record bytes, a byte ring; a growable buffer, grown (while
//                                empty) when a record does not fit a quarter of it

import { sharedClockNs } from './shared-clock.js';
import { waitAsync } from './wait-async.js';

export const SLOT_COUNT = 1024;
export const SLOT_FIELDS = 4;
export const DUE_NS = 0;
export const DATA_START = 1;
export const DATA_LENGTH = 2;
export const RECORD_OFFSET = 3;

export const PUBLISHED = 0;
export const CLAIMED = 1;
export const CLOSED = 2;
export const SEATED = 3;
export const WORKER_HOLDS = 8;
/** workers a ring serves, at most */
export const RING_WORKERS_MAX = 248;
export const CONTROL_INTS = WORKER_HOLDS + RING_WORKERS_MAX;

/** the byte ring's start size; it grows to hold four of the largest record seen */
export const DATA_BYTES_INITIAL = 8 << 20;

/** A SharedArrayBuffer that can grow in place (ES2024; the project's TypeScript lib predates it). */
export interface GrowableSharedArrayBuffer extends SharedArrayBuffer {
  readonly maxByteLength: number;
  grow(byteLength: number): void;
}

const GrowableShared = SharedArrayBuffer as unknown as new (byteLength: number, options: { maxByteLength: number }) => GrowableSharedArrayBuffer;

/** The shared buffers of one ring (sent to every worker in its serve task). */
export interface RingBuffers {
  control: SharedArrayBuffer;
  slots: SharedArrayBuffer;
  copied: SharedArrayBuffer;
  data: GrowableSharedArrayBuffer;
}

export function makeRingBuffers(maxRecordBytes: number): RingBuffers {
  return {
    control: new SharedArrayBuffer(4 * CONTROL_INTS),
    slots: new SharedArrayBuffer(8 * SLOT_COUNT * SLOT_FIELDS),
    copied: new SharedArrayBuffer(4 * SLOT_COUNT),
    // a growable buffer reserves address space only; pages are touched as records are written
    data: new GrowableShared(DATA_BYTES_INITIAL, { maxByteLength: Math.max(DATA_BYTES_INITIAL, 4 * maxRecordBytes) }),
  };
}

export interface RingViews {
  control: Int32Array;
  slots: Float64Array;
  copied: Int32Array;
  /** length-tracking: sees the buffer's growth */
  data: Uint8Array;
}

export function ringViews(buffers: RingBuffers): RingViews {
  return {
    control: new Int32Array(buffers.control),
    slots: new Float64Array(buffers.slots),
    copied: new Int32Array(buffers.copied),
    data: new Uint8Array(buffers.data),
  };
}

/** How long an idle worker sleeps between looks at a ring with nothing published (ms). */
const IDLE_WAIT_MS = 50;

/**
 * Worker side: claims the next published event and returns its ordinal, or -1 once the ring is
 * closed and every event has been claimed. Blocks (Atomics.wait) while nothing is published.
 */
export function claimNext(control: Int32Array): number {
  for (;;) {
    const claimed = Atomics.load(control, CLAIMED);
    const published = Atomics.load(control, PUBLISHED);
    if (claimed < published) {
      if (Atomics.compareExchange(control, CLAIMED, claimed, claimed + 1) === claimed) return claimed;
      continue;
    }
    // CLOSED is set after the last PUBLISHED store: read it first, then look once more
    if (Atomics.load(control, CLOSED) === 1 && Atomics.load(control, PUBLISHED) === claimed) return -1;
    Atomics.wait(control, PUBLISHED, published, IDLE_WAIT_MS);
  }
}

/** Worker side: the claimed event's record, copied out; its slot and bytes are free afterwards. */
export function copyRecord(views: RingViews, ordinal: number, into: Uint8Array): void {
  const at = (ordinal % SLOT_COUNT) * SLOT_FIELDS;
  const start = views.slots[at + DATA_START];
  into.set(views.data.subarray(start, start + views.slots[at + DATA_LENGTH]));
  Atomics.store(views.copied, ordinal % SLOT_COUNT, ordinal + 1);
}

/**
 * Reader side (main thread): writes records into the byte ring and publishes them. The caller
 * keeps at most SLOT_COUNT events published and not yet delivered, so a slot is never reused
 * before its event's result is back; this class keeps record bytes until a worker has copied
 * them out.
 */
export class RingWriter {
  readonly views: RingViews;
  private published = 0;
  /** oldest published ordinal whose bytes a worker may still have to copy */
  private oldest = 0;
  private writeAt = 0;
  private readonly startOf = new Float64Array(SLOT_COUNT);

  constructor(readonly buffers: RingBuffers) {
    this.views = ringViews(buffers);
  }

  get count(): number {
    return this.published;
  }

  /** Whether a record of `length` bytes fits now; false: wait for workers to copy some out. */
  fits(length: number): boolean {
    return this.placeFor(length) >= 0;
  }

  /** Writes one record (it must fit) and makes it claimable, due at dueNs on the shared clock. */
  publish(dueNs: number, bytes: Uint8Array, recordOffset: number): number {
    const start = this.placeFor(bytes.length);
    if (start < 0) throw new Error('event ring: publish without room');
    const ordinal = this.published;
    const { slots, data, control } = this.views;
    data.set(bytes, start);
    const at = (ordinal % SLOT_COUNT) * SLOT_FIELDS;
    slots[at + DUE_NS] = dueNs;
    slots[at + DATA_START] = start;
    slots[at + DATA_LENGTH] = bytes.length;
    slots[at + RECORD_OFFSET] = recordOffset;
    this.startOf[ordinal % SLOT_COUNT] = start;
    this.writeAt = start + bytes.length;
    this.published = ordinal + 1;
    Atomics.store(control, PUBLISHED, this.published);
    Atomics.notify(control, PUBLISHED, 1);
    return ordinal;
  }

  /** No events after those published; idle workers return. */
  close(): void {
    Atomics.store(this.views.control, CLOSED, 1);
    Atomics.notify(this.views.control, PUBLISHED);
  }

  /** Where a record of `length` bytes can go, or -1. Bytes a worker has copied out are free. */
  private placeFor(length: number): number {
    const { copied, data } = this.views;
    while (this.oldest < this.published && Atomics.load(copied, this.oldest % SLOT_COUNT) === this.oldest + 1) this.oldest++;
    if (this.oldest === this.published) {
      // empty: start again at 0, and grow while nothing is in the ring
      this.writeAt = 0;
      if (4 * length > data.length) {
        const wanted = Math.min(this.buffers.data.maxByteLength, 2 ** Math.ceil(Math.log2(4 * length)));
        if (wanted > data.length) this.buffers.data.grow(wanted);
      }
      return length <= data.length ? 0 : -1;
    }
    const head = this.startOf[this.oldest % SLOT_COUNT];
    if (this.writeAt >= head) {
      if (this.writeAt + length <= data.length) return this.writeAt;
      // wrap to the start; strictly below head, so a full ring never looks empty
      return length < head ? 0 : -1;
    }
    return this.writeAt + length < head ? this.writeAt : -1;
  }
}

/**
 * Until `workers` workers have taken their seat at the ring (SEATED), at most `giveUpMs`, or
 * until the signal aborts: the run's clock starts after, so a worker's start-up is not charged
 * to the first events as waiting. A worker that cannot start is its serve task's failure to
 * report; the run then starts without it.
 */
export async function waitForSeats(control: Int32Array, workers: number, giveUpMs: number, signal: AbortSignal | undefined): Promise<void> {
  const giveUpNs = sharedClockNs() + giveUpMs * 1e6;
  for (;;) {
    const seated = Atomics.load(control, SEATED);
    if (seated >= workers || signal?.aborted) return;
    const leftMs = (giveUpNs - sharedClockNs()) / 1e6;
    if (leftMs <= 0) return;
    const waiting = waitAsync(control, SEATED, seated, Math.min(leftMs, 100));
    if (waiting.async) await waiting.value;
  }
}
