// The main thread's side of the open loop's way back (event-results.ts): it waits on the slots'
// WRITTEN word, blocking for a moment at a time while events are out (BLOCKING_WAIT_MS), else
// with Atomics.waitAsync (no thread hop beyond the main thread's own wake-up),
// looks at the slots of the events claimed and not yet complete, and takes each event's time
// of return as the moment the whole result is on this thread: its slot seen done and, when a
// message carries the rest, that message received.

import { SLOT_COUNT } from './event-ring.js';
import { makeResultBuffers, ResultSlots, WRITTEN } from './event-results.js';
import { sharedClockNs } from './shared-clock.js';
import { ThreadCpuWait } from '../measure/thread-cpu-wait.js';
import type { EventMessage } from './worker-contract.js';

import { waitAsync } from './wait-async.js';

/** How long one wait lasts at most (ms), so a stopped collector is never stuck. */
const WAIT_MS = 100;
/**
 * With events claimed and not yet back, the thread blocks on the word for at most this long
 * (ms) before it lets its event loop run: a blocked thread is woken by the kernel straight away,
 * while Atomics.waitAsync's wake-up goes through the event loop's task queue (about 100 µs
 * later on this project's test machines, bench:pool). The reader publishes tens of ms ahead, so
 * its timers can wait this long.
 */
const BLOCKING_WAIT_MS = 1;

/** one turn of the event loop (timers, reads, worker messages) */
const letLoopRun = (): Promise<void> => new Promise((resolve) => setImmediate(resolve));

export class ResultCollector {
  readonly slots = new ResultSlots(makeResultBuffers());
  /** when each slot's event became complete here (shared clock ns) */
  readonly receivedAt = new Float64Array(SLOT_COUNT);
  /** ordinal + 1 of the event each slot holds complete here */
  private readonly completeOrdinal = new Float64Array(SLOT_COUNT);
  /** messages of results a slot does not hold whole, by ordinal, until delivered */
  private readonly extras = new Map<number, EventMessage>();
  private readonly reusable = this.slots.reusableMessage();
  /** lowest ordinal that may still be incomplete */
  private scanFrom = 0;
  private stopped = false;
  /**
   * this thread's wait for a CPU (thread-cpu-wait.ts): read when the collector starts and stops
   * (mainCpuWaitNs); per event (perEvent) also before each blocking wait, and at the first result
   * seen after it, the difference charged to the results seen on that wake (their return waited
   * for it). Results seen otherwise (after an event-loop turn, or a wait through the loop) are
   * charged nothing: what the thread waited for then may have come before the result.
   */
  private readonly cpuWait = new ThreadCpuWait();
  private cpuWaitAtStartNs = -1;
  /** this thread's wait for a CPU from run() to stop() (ns; -1 unknown) */
  mainCpuWaitNs = -1;
  private cpuWaitBeforeSleepNs = -1;
  private wakeCpuWaitNs = 0;
  private woke = false;
  /** what each slot's event was charged (ns; -1 unknown) */
  readonly mainCpuWaitOf = new Float64Array(SLOT_COUNT);

  /**
   * `claimed()`: events claimed by workers so far (results exist for those only);
   * `onComplete`: called once per event, when its result is complete here.
   */
  constructor(
    private engine: string,
    private readonly claimed: () => number,
    private readonly onComplete: (ordinal: number, receivedNs: number) => void,
    private readonly perEvent = false,
  ) {}

  isComplete(ordinal: number): boolean {
    return this.completeOrdinal[ordinal % SLOT_COUNT] === ordinal + 1;
  }

  /** Waits for results and completes them until stop(). */
  async run(): Promise<void> {
    const flags = this.slots.flags;
    this.cpuWaitAtStartNs = this.cpuWait.waitNs();
    while (!this.stopped) {
      const written = Atomics.load(flags, WRITTEN);
      this.scan();
      if (this.stopped) break;
      if (this.scanFrom < this.claimed()) {
        if (this.perEvent) this.cpuWaitBeforeSleepNs = this.cpuWait.waitNs();
        if (Atomics.wait(flags, WRITTEN, written, BLOCKING_WAIT_MS) !== 'timed-out') this.scan(true);
        await letLoopRun();
        continue;
      }
      const waiting = waitAsync(flags, WRITTEN, written, WAIT_MS);
      if (waiting.async) await waiting.value;
    }
  }

  stop(): void {
    this.stopped = true;
    const nowNs = this.cpuWait.waitNs();
    this.mainCpuWaitNs = nowNs >= 0 && this.cpuWaitAtStartNs >= 0 ? nowNs - this.cpuWaitAtStartNs : -1;
    this.cpuWait.close();
    Atomics.notify(this.slots.flags, WRITTEN);
  }

  /** A message from a worker: the part of a result its slot does not hold. */
  onMessage(message: EventMessage): void {
    if (this.isComplete(message.ordinal) || this.extras.has(message.ordinal)) return;
    this.extras.set(message.ordinal, message);
    if (message.result) this.engine = message.result.engine;
    if (this.slots.isDone(message.ordinal)) this.complete(message.ordinal);
  }

  /** An event whose worker's thread died holding it: it completes with this failure. */
  failHeld(message: EventMessage): void {
    if (this.isComplete(message.ordinal)) return;
    this.extras.set(message.ordinal, message);
    this.complete(message.ordinal);
  }

  /**
   * The complete event's outcome, once, at its delivery: its message, or one made from its
   * slot (an object reused from event to event: delivery reads it before it returns).
   */
  take(ordinal: number): EventMessage {
    const message = this.extras.get(ordinal);
    if (message) {
      this.extras.delete(ordinal);
      return message;
    }
    return this.slots.read(ordinal, this.reusable, this.engine);
  }

  /** `afterSleep`: the thread has just woken; the first result seen reads what the wake cost */
  private scan(afterSleep = false): void {
    this.woke = afterSleep;
    this.wakeCpuWaitNs = 0;
    const claimed = this.claimed();
    const { slots } = this;
    for (let ordinal = this.scanFrom; ordinal < claimed; ordinal++) {
      if (this.isComplete(ordinal) || !slots.isDone(ordinal)) continue;
      if (!slots.hasExtras(ordinal) || this.extras.has(ordinal)) this.complete(ordinal);
    }
    while (this.scanFrom < claimed && this.isComplete(this.scanFrom)) this.scanFrom++;
    this.woke = false;
    this.wakeCpuWaitNs = 0;
  }

  /** what this wake charges the results it sees: read once, at the first of them */
  private chargeWake(): number {
    if (this.woke) {
      this.woke = false;
      const nowNs = this.cpuWait.waitNs();
      this.wakeCpuWaitNs = nowNs >= 0 && this.cpuWaitBeforeSleepNs >= 0 ? nowNs - this.cpuWaitBeforeSleepNs : -1;
    }
    return this.wakeCpuWaitNs;
  }

  private complete(ordinal: number): void {
    const slot = ordinal % SLOT_COUNT;
    const receivedNs = sharedClockNs();
    this.completeOrdinal[slot] = ordinal + 1;
    this.receivedAt[slot] = receivedNs;
    this.mainCpuWaitOf[slot] = this.perEvent && this.cpuWait.available ? this.chargeWake() : -1;
    this.onComplete(ordinal, receivedNs);
  }
}
