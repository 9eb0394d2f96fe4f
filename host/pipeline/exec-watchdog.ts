// The per-event timeout of an engine program while its worker waits in a blocking read
// (exec-process.ts): the waiting thread cannot run a timer, so a small thread of its own does.
// It kills the program's process group when the armed deadline passes (a write blocked on a
// full events pipe then fails), then writes one byte into the answers pipe, so that the read
// returns even when a child outside the group still holds the program's stdout.
//
//   new Watchdog(longestSleepMs)   starts the thread (unref'd: it never keeps jetlag alive)
//   arm(pid, answersFd, deadlineNs)   one wait; deadline on the monotonic clock, ns
//   disarm(): boolean              true when disarmed in time (or nothing armed); false when
//                                  the watchdog fired, returned after its kill and wake-up byte
//                                  are done (so the answers fd may then be closed)
//   fired                          the armed wait's deadline passed: the program is being killed
//   close()
//
// No message per event: the thread sleeps (Atomics.wait) until the armed deadline or, with
// nothing armed, for longestSleepMs, the shortest timeout it will be armed with; any deadline
// armed while it sleeps is at least that far away, so it wakes before every deadline. With a
// 10 s timeout it wakes once in 10 s. Arming and disarming are a compare-and-swap on one word,
// and the fd is only closed by its owner once the watchdog can no longer write into it.

import { Worker } from 'node:worker_threads';

const ARMED = 0; // sequence of the armed wait, 0 when none
const FIRED = 1; // last sequence the watchdog fired on, stored once its kill and wake-up are done
const PID = 2;
const ANSWERS_FD = 3;
const STOP = 4;
const CONTROL_WORDS = 5;

const WATCHDOG_SOURCE = `
const { workerData } = require('node:worker_threads');
const fs = require('node:fs');
const control = new Int32Array(workerData.control);
const deadline = new BigInt64Array(workerData.deadline);
const [ARMED, FIRED, PID, ANSWERS_FD, STOP] = [0, 1, 2, 3, 4];
function wakeReader(fd) {
  // a second writer on the answers pipe (Linux /proc): one byte ends the blocking read
  let writer = -1;
  try {
    writer = fs.openSync('/proc/self/fd/' + fd, fs.constants.O_WRONLY | fs.constants.O_NONBLOCK);
    if (fs.fstatSync(writer).isFIFO()) fs.writeSync(writer, Buffer.of(0));
  } catch {}
  if (writer >= 0) fs.closeSync(writer);
}
while (Atomics.load(control, STOP) === 0) {
  const armed = Atomics.load(control, ARMED);
  let sleepMs = workerData.longestSleepMs;
  if (armed !== 0) {
    const due = Atomics.load(deadline, 0);
    const pid = Atomics.load(control, PID);
    const fd = Atomics.load(control, ANSWERS_FD);
    if (Atomics.load(control, ARMED) !== armed) continue;
    const nowNs = process.hrtime.bigint();
    if (nowNs >= due) {
      if (Atomics.compareExchange(control, ARMED, armed, 0) === armed) {
        // the program's process group (exec-process.ts spawns it detached): a child of it that
        // holds stdin would keep a blocking write of an event waiting; once no reader is left
        // that write fails (EPIPE)
        try { process.kill(-pid, 'SIGKILL'); } catch {}
        wakeReader(fd);
        Atomics.store(control, FIRED, armed);
        Atomics.notify(control, FIRED);
      }
      continue;
    }
    sleepMs = Math.min(sleepMs, Number(due - nowNs) / 1e6 + 0.05);
  }
  Atomics.wait(control, STOP, 0, sleepMs);
}
`;

export class Watchdog {
  private readonly control = new Int32Array(new SharedArrayBuffer(CONTROL_WORDS * 4));
  private readonly deadline = new BigInt64Array(new SharedArrayBuffer(8));
  private readonly thread: Worker;
  private sequence = 0;
  private armedSequence = 0;

  constructor(longestSleepMs: number) {
    this.thread = new Worker(WATCHDOG_SOURCE, {
      eval: true,
      workerData: { control: this.control.buffer, deadline: this.deadline.buffer, longestSleepMs: Math.max(1, longestSleepMs) },
    });
    this.thread.unref();
  }

  /** Arms the watchdog for one wait (a disarmed one first, if any). */
  arm(pid: number, answersFd: number, deadlineNs: bigint): void {
    this.disarm();
    this.sequence = this.sequence >= 0x7ffffffe ? 1 : this.sequence + 1;
    Atomics.store(this.control, PID, pid);
    Atomics.store(this.control, ANSWERS_FD, answersFd);
    Atomics.store(this.deadline, 0, deadlineNs);
    Atomics.store(this.control, ARMED, this.sequence);
    this.armedSequence = this.sequence;
  }

  /** true when nothing was armed or it was disarmed in time; false when the watchdog fired */
  disarm(): boolean {
    const sequence = this.armedSequence;
    if (sequence === 0) return true;
    this.armedSequence = 0;
    if (Atomics.compareExchange(this.control, ARMED, sequence, 0) === sequence) return true;
    // fired or firing: wait until its kill and its byte are done
    for (let seen = Atomics.load(this.control, FIRED); seen !== sequence; seen = Atomics.load(this.control, FIRED)) {
      Atomics.wait(this.control, FIRED, seen, 50);
    }
    return false;
  }

  /**
   * Whether the watchdog has taken the armed wait (its deadline passed): the kill and the
   * wake-up byte may still be under way, so whatever was read is not the program's answer.
   */
  get fired(): boolean {
    return this.armedSequence !== 0 && Atomics.load(this.control, ARMED) !== this.armedSequence;
  }

  close(): void {
    Atomics.store(this.control, STOP, 1);
    Atomics.notify(this.control, STOP);
  }
}
