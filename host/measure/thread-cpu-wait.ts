// How long the calling thread has waited for a CPU: runnable, but another thread held the core.
// Linux keeps it per thread in /proc/thread-self/schedstat, three numbers (time on a CPU,
// time waiting on a run queue, time slices), in ns (the kernel's Documentation/scheduler/
// sched-stats.rst, "/proc/<pid>/schedstat"). The open loop reads it for each serving thread
// and the main thread at the start and end of the run, and with --cpu-wait-per-event also per
// event in the worker and per wake on the main thread, so a latency that grew because the
// machine gave the core to something else says so (open-loop-serve.ts, open-loop-collect.ts).
//
// One read is a pread of a few dozen bytes into a buffer made once, parsed without allocating.

import { closeSync, openSync, readSync } from 'node:fs';

const SCHEDSTAT_PATH = '/proc/thread-self/schedstat';
/** three decimal numbers of at most 20 digits, two spaces and a newline */
const SCHEDSTAT_BYTES = 64;
const SPACE = 0x20;
const DIGIT_0 = 0x30;
const DIGIT_9 = 0x39;

/** The second number of a schedstat line (run-queue wait, ns); -1 when the text is not one. */
export function parseRunQueueWaitNs(bytes: Uint8Array, length: number): number {
  let at = 0;
  while (at < length && bytes[at] >= DIGIT_0 && bytes[at] <= DIGIT_9) at++;
  if (at === 0 || at >= length || bytes[at] !== SPACE) return -1;
  at++;
  const start = at;
  let value = 0;
  while (at < length && bytes[at] >= DIGIT_0 && bytes[at] <= DIGIT_9) value = value * 10 + (bytes[at++] - DIGIT_0);
  return at === start ? -1 : value;
}

/** The calling thread's run-queue wait, read on demand; every read gives -1 where Linux does not keep it. */
export class ThreadCpuWait {
  private fd: number | null;
  private readonly bytes = new Uint8Array(SCHEDSTAT_BYTES);

  /** Opens the calling thread's file: make it on the thread it measures. */
  constructor(path = SCHEDSTAT_PATH) {
    try {
      this.fd = openSync(path, 'r');
    } catch {
      this.fd = null;
    }
    if (this.fd !== null && this.waitNs() < 0) this.close();
  }

  get available(): boolean {
    return this.fd !== null;
  }

  /** ns this thread has spent runnable and not running since it started; -1 when unknown */
  waitNs(): number {
    if (this.fd === null) return -1;
    try {
      const length = readSync(this.fd, this.bytes, 0, SCHEDSTAT_BYTES, 0);
      return parseRunQueueWaitNs(this.bytes, length);
    } catch {
      return -1;
    }
  }

  close(): void {
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
  }
}
