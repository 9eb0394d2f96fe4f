// The main thread's side of an open-loop run. It reads records, gives each its scheduled arrival
// (arrivals.ts) and publishes it to the event ring (event-ring.ts) shortly before it is due; the
// workers claim events from the ring and start each at its arrival (open-loop-serve.ts). Each
// result comes back through a slot in shared memory (event-results.ts, open-loop-collect.ts);
// results are delivered in input order (RunDelivery), with the event's own times:
//
//   due ────── wait ──────► start in a worker ── service ──► ... ── return ──► back on this thread
//   (scheduled arrival)      (after its arrival)  (clustering)          (the main thread has it)
//   └──────────────────────────────── end-to-end ─────────────────────────────────────────────┘
//
// Dispatch lateness, a property of the harness, is taken apart from the events' waiting: for
// an event a worker was ready for before it was due, start - due (how late the waiting worker
// woke); for an event the reader published after it was due while the ring had room, publish -
// due (the reader fell behind). An event that arrives while every worker is busy waits in the
// ring: that is queueing, measured in its wait, not lateness of the harness.

import { MessageChannel, type MessagePort } from 'node:worker_threads';
import { InputError } from '../errors.js';
import type { RawRecord } from '../input/record-reader.js';
import type { ArrivalSchedule } from './arrivals.js';
import { CLAIMED, makeRingBuffers, RingWriter, SLOT_COUNT, waitForSeats, WORKER_HOLDS } from './event-ring.js';
import { sharedClockNs } from './shared-clock.js';
import { ResultCollector } from './open-loop-collect.js';
import { RisingLine } from '../measure/rising-line.js';
import type { BatchOutcome, BatchPool } from './pool.js';
import type { RunDelivery } from './run-delivery.js';
import type { EventMessage, ServeOutcome, ServeTask } from './worker-contract.js';

/** Events are published at least this long before they are due (the reader sleeps on a ms-coarse timer). */
export const PUBLISH_AHEAD_NS = 30_000_000;
/**
 * ... and at most this much more: the reader sleeps only when the next event is due more than
 * PUBLISH_AHEAD_NS + PUBLISH_BURST_NS ahead, then publishes every event of the next
 * PUBLISH_BURST_NS at once, so it wakes on a timer about every 10 ms, not once per event
 * (each wake takes a core from the workers for a moment).
 */
export const PUBLISH_BURST_NS = 10_000_000;
/** The first event is due this long after the run starts, so it is published ahead like the rest. */
export const START_LEAD_NS = 5_000_000;
/** How long the run waits for its workers to take their seats at the ring before it starts without them. */
const SEATING_WAIT_MS = 30_000;

/** a backlog rising through the run by more than this many events per worker and ... */
const BACKLOG_RISE_WORKERS = 4;
/** ... this fraction of the events counts as growing (saturation) */
const BACKLOG_RISE_FRACTION = 0.05;

/** Resolves after `ms`, or at once when the signal aborts. */
function sleepUnlessAborted(ms: number, signal: AbortSignal | undefined): Promise<void> {
  if (signal?.aborted) return Promise.resolve();
  return new Promise((resolve) => {
    const done = () => { clearTimeout(timer); signal?.removeEventListener('abort', done); resolve(); };
    const timer = setTimeout(done, ms);
    signal?.addEventListener('abort', done, { once: true });
  });
}

export interface OpenLoopPlan {
  workers: number;
  /** shards take every n-th group of `batch` records, as in a closed loop */
  batch: number;
  shard: { index: number; count: number };
  maxEvents: number | null | undefined;
  signal: AbortSignal | undefined;
  maxRecordBytes: number;
  /** each event's wait for a CPU on its threads, not only the run's totals (RunOptions.cpuWaitPerEvent) */
  cpuWaitPerEvent: boolean;
}

/** an event's wait for a CPU: its worker's and the main thread's; -1 when either is unknown */
function cpuWaitOf(workerNs: number, mainNs: number): number {
  return workerNs >= 0 && mainNs >= 0 ? workerNs + mainNs : -1;
}

export class OpenLoopFeed {
  records = 0;
  lastOffset = 0;
  partialReason: string | null = null;
  inputError: InputError | null = null;
  /** shared clock ns at the run's start and when its last result came back */
  startNs = 0;
  endNs = 0;
  private readonly ring: RingWriter;
  private readonly dueOf = new Float64Array(SLOT_COUNT);
  private readonly recordOf = new Float64Array(SLOT_COUNT);
  private readonly offsetOf = new Float64Array(SLOT_COUNT);
  /** the delivered event's offset and arrival, reused: delivery reads them before it returns */
  private readonly outcomeOffset = new Float64Array(1);
  private readonly outcomeDue = new Float64Array(1);
  private readonly collector: ResultCollector;
  private delivered = 0;
  private received = 0;
  /** published events due by the latest result's arrival (for the backlog) */
  private dueSeen = 0;
  private firstDueNs = 0;
  /** first exception thrown while delivering a result; re-thrown by feed() */
  private deliverError: unknown = null;
  private lastReceivedNs = 0;
  /** return times from the start, in delivery (= input) order: the sustained rate's fit */
  private readonly returnLine = new RisingLine();
  /** a line through the backlog (events due, result not back) at each result, in the order results came: saturation data */
  private readonly backlogLine = new RisingLine();
  private readonly ports: MessagePort[] = [];
  private readonly serving: Promise<void>[] = [];
  private wake: (() => void) | null = null;
  private readingDone = false;
  /** the serving threads' wait for a CPU over their serve tasks, summed (ns; -1 unknown) */
  private workersCpuWaitNs = 0;
  /** aborted when a serve task fails */
  private readonly serveFailed = new AbortController();

  constructor(
    private readonly plan: OpenLoopPlan,
    private readonly schedule: ArrivalSchedule,
    private readonly pool: BatchPool,
    private readonly delivery: RunDelivery,
  ) {
    this.ring = new RingWriter(makeRingBuffers(plan.maxRecordBytes));
    const control = this.ring.views.control;
    this.collector = new ResultCollector(delivery.engineName, () => Atomics.load(control, CLAIMED), (ordinal, receivedNs) => this.onResult(ordinal, receivedNs), plan.cpuWaitPerEvent);
  }

  /** Starts the serving workers, reads and publishes every event, and waits for every result. */
  async feed(records: AsyncIterable<RawRecord>): Promise<void> {
    const collecting = this.collector.run();
    for (let w = 0; w < this.plan.workers; w++) this.serve(w);
    // a serve task that failed ends the wait: its worker will not sit down (it is served again)
    const seating = this.plan.signal ? AbortSignal.any([this.plan.signal, this.serveFailed.signal]) : this.serveFailed.signal;
    await waitForSeats(this.ring.views.control, this.plan.workers, SEATING_WAIT_MS, seating);
    this.startNs = sharedClockNs() + START_LEAD_NS;
    try {
      await this.publishAll(records);
    } finally {
      this.readingDone = true;
      this.ring.close();
    }
    try {
      while (this.delivered < this.ring.count) await this.nextResult();
    } finally {
      this.collector.stop();
      await collecting;
    }
    await Promise.all(this.serving);
    for (const port of this.ports) port.close();
    this.endNs = this.lastReceivedNs || sharedClockNs();
    this.recordRates();
    this.delivery.tally.recordThreadCpuWait(this.workersCpuWaitNs, this.collector.mainCpuWaitNs, this.plan.workers);
  }

  private async publishAll(records: AsyncIterable<RawRecord>): Promise<void> {
    const { batch, shard, maxEvents, signal } = this.plan;
    try {
      for await (const record of records) {
        if (signal?.aborted) { this.partialReason = 'interrupted: reading stopped, events in flight drained'; break; }
        // a shard read through a record index gets only its own records, each with its place in the file
        const record0 = record.recordNumber ?? this.records;
        if (maxEvents != null && record0 >= maxEvents) break;
        this.records = record0 + 1;
        this.lastOffset = record.offset;
        if (Math.floor(record0 / batch) % shard.count !== shard.index) continue;
        await this.publish(record, record0);
        if (signal?.aborted) { this.partialReason = 'interrupted: reading stopped, events in flight drained'; break; }
      }
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      this.inputError = error;
      this.partialReason = `input unreadable from here on: ${error.message}`;
    }
  }

  private async publish(record: RawRecord, record0: number): Promise<void> {
    const dueNs = this.startNs + this.schedule.next();
    await this.delivery.jetsWritten();
    let waitedForRoom = false;
    while (this.ring.count - this.delivered >= SLOT_COUNT || !this.ring.fits(record.bytes.length)) {
      waitedForRoom = true;
      await this.nextResult();
    }
    const aheadNs = dueNs - PUBLISH_AHEAD_NS - sharedClockNs();
    if (aheadNs >= PUBLISH_BURST_NS) await sleepUnlessAborted(Math.floor(aheadNs / 1e6), this.plan.signal);
    // stopped while waiting to publish: the event is not sent (the read loop says why)
    if (this.plan.signal?.aborted) return;
    const ordinal = this.ring.publish(dueNs, record.bytes, record.offset);
    const slot = ordinal % SLOT_COUNT;
    this.dueOf[slot] = dueNs;
    this.recordOf[slot] = record0;
    this.offsetOf[slot] = record.offset;
    if (ordinal === 0) this.firstDueNs = dueNs;
    const latenessNs = sharedClockNs() - dueNs;
    // published after its arrival with room in the ring: the reader itself was late
    if (latenessNs > 0 && !waitedForRoom) this.delivery.tally.recordDispatchLatenessNs(latenessNs);
  }

  /** Runs one serve task on the pool for worker slot w; if its thread dies, fails its event and serves again. */
  private serve(w: number): void {
    const { port1, port2 } = new MessageChannel();
    port1.on('message', (message: EventMessage) => this.collector.onMessage(message));
    this.ports.push(port1);
    const task: ServeTask = { serve: { ring: this.ring.buffers, results: this.collector.slots.buffers, workerIndex: w, port: port2, cpuWaitPerEvent: this.plan.cpuWaitPerEvent } };
    this.serving.push(this.pool.runTask(task, [port2]).then(
      (value: unknown) => {
        const outcome = value as ServeOutcome;
        // a thread that died took its figure with it: the total is then unknown
        this.workersCpuWaitNs = outcome.cpuWaitNs >= 0 && this.workersCpuWaitNs >= 0 ? this.workersCpuWaitNs + outcome.cpuWaitNs : -1;
      },
      (error: unknown) => {
        this.serveFailed.abort();
        this.workersCpuWaitNs = -1;
        const held = Atomics.load(this.ring.views.control, WORKER_HOLDS + w) - 1;
        Atomics.store(this.ring.views.control, WORKER_HOLDS + w, 0);
        const reason = error instanceof Error ? (error.message.split('\n')[0] || error.name) : String(error);
        if (held >= this.delivered && !this.collector.isComplete(held)) {
          this.collector.failHeld({ ordinal: held, startNs: sharedClockNs(), claimedEarly: false, result: null, failure: reason });
        }
        if (!this.readingDone || Atomics.load(this.ring.views.control, CLAIMED) < this.ring.count) this.serve(w);
      },
    ));
  }

  /** One event's result complete on this thread (ResultCollector): delivered in input order. */
  private onResult(ordinal: number, receivedNs: number): void {
    if (ordinal < this.delivered) return;
    this.received++;
    this.lastReceivedNs = receivedNs;
    if (this.dueSeen < this.delivered) this.dueSeen = this.delivered;
    while (this.dueSeen < this.ring.count && this.dueOf[this.dueSeen % SLOT_COUNT] <= receivedNs) this.dueSeen++;
    this.backlogLine.add(this.dueSeen - this.received);
    while (this.delivered < this.ring.count && this.collector.isComplete(this.delivered)) {
      try {
        this.deliver(this.delivered);
      } catch (error) {
        this.deliverError ??= error;
      }
      this.delivered++;
    }
    const wake = this.wake;
    this.wake = null;
    wake?.();
  }

  private deliver(ordinal: number): void {
    const message = this.collector.take(ordinal);
    const slot = ordinal % SLOT_COUNT;
    const receivedNs = this.collector.receivedAt[slot];
    this.returnLine.add(receivedNs - this.startNs);
    const dueNs = this.dueOf[slot];
    if (message.claimedEarly && message.result) this.delivery.tally.recordDispatchLatenessNs(message.startNs - dueNs);
    this.outcomeOffset[0] = this.offsetOf[slot];
    this.outcomeDue[0] = dueNs;
    const outcome: BatchOutcome = {
      batchIndex: message.ordinal,
      count: 1,
      recordOffsets: this.outcomeOffset,
      firstRecord: this.recordOf[slot],
      startNs: this.outcomeDue,
      finishedNs: receivedNs,
      workerStartNs: message.startNs,
      cpuWaitNs: cpuWaitOf(message.cpuWaitNs ?? -1, this.collector.mainCpuWaitOf[slot]),
      result: message.result,
      failure: message.failure,
    };
    this.delivery.deliver(outcome);
  }

  private async nextResult(): Promise<void> {
    await new Promise<void>((resolve) => { this.wake = resolve; });
    if (this.deliverError) throw this.deliverError;
  }

  /**
   * Offered rate: events over the span of their arrivals. Sustained rate: one over the slope of
   * a straight line fitted (least squares) to each event's return time against its place in
   * the run; a pool that keeps up returns events as they arrive, one that does not at its own
   * pace, and a late first or last event moves a fitted slope far less than a span. The backlog
   * grew when a straight line fitted to it rises through the run by more than a few events per
   * worker and 5 % of the events: a pool that keeps up has a backlog that comes and goes (a
   * stall of the machine piles up a few events, which then drain), one that does not has a
   * backlog that climbs with every event.
   */
  private recordRates(): void {
    const events = this.ring.count;
    if (events < 2 || this.returnLine.count < 2) return;
    const firstDue = this.firstDueNs;
    const lastDue = this.dueOf[(events - 1) % SLOT_COUNT];
    const offeredHz = lastDue > firstDue ? ((events - 1) * 1e9) / (lastDue - firstDue) : Infinity;
    const slopeNs = this.returnLine.slope();
    const sustainedHz = slopeNs > 0 ? 1e9 / slopeNs : Infinity;
    const backlogGrew = this.backlogLine.rise() > Math.max(BACKLOG_RISE_WORKERS * this.plan.workers, BACKLOG_RISE_FRACTION * events);
    this.delivery.tally.recordRates(offeredHz, sustainedHz, backlogGrew);
  }
}
