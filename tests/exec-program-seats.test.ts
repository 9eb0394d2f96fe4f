// `--program-cpu same` seats (host/pipeline/exec-cpu.ts takeProgramSeat): a thread that
// replaces a dead worker takes the dead one's seat (so its CPU), not the next number, which
// could land on a live worker's CPU; live workers keep theirs. The holders are real threads
// (plain worker_threads that only say their Linux thread id), so "gone" is the kernel's word.

import { readlinkSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { afterEach, describe, expect, it } from 'vitest';
import { programSeatsBuffer, takeProgramSeat } from '../host/pipeline/exec-cpu.js';

const SAYS_ITS_THREAD_ID = `
const { parentPort } = require('node:worker_threads');
const { readlinkSync } = require('node:fs');
parentPort.postMessage(Number(readlinkSync('/proc/thread-self').split('/').pop()));
parentPort.on('message', () => {});
`;

const started: Worker[] = [];
afterEach(async () => {
  await Promise.all(started.splice(0).map((thread) => thread.terminate()));
});

/** a live thread and its Linux thread id */
async function liveThread(): Promise<{ thread: Worker; threadId: number }> {
  const thread = new Worker(SAYS_ITS_THREAD_ID, { eval: true });
  started.push(thread);
  const threadId = await new Promise<number>((resolve, reject) => {
    thread.once('message', resolve);
    thread.once('error', reject);
  });
  return { thread, threadId };
}

const onLinux = process.platform === 'linux';

describe('program seats', () => {
  it.skipIf(!onLinux)('go to a replacement thread from the thread that is gone, not past the live ones', async () => {
    const seats = programSeatsBuffer();
    const first = await liveThread();
    const second = await liveThread();
    expect(takeProgramSeat(seats, first.threadId)).toBe(0);
    expect(takeProgramSeat(seats, second.threadId)).toBe(1);
    await first.thread.terminate();
    const replacement = await liveThread();
    expect(takeProgramSeat(seats, replacement.threadId)).toBe(0);
  });

  it.skipIf(!onLinux)('are not taken from live threads', async () => {
    const seats = programSeatsBuffer();
    const holders = [await liveThread(), await liveThread()];
    for (const [seat, holder] of holders.entries()) expect(takeProgramSeat(seats, holder.threadId)).toBe(seat);
    expect(takeProgramSeat(seats, (await liveThread()).threadId)).toBe(2);
  });

  it.skipIf(!onLinux)('stay with a thread that asks again, the calling thread by default', () => {
    const seats = programSeatsBuffer();
    const own = Number(readlinkSync('/proc/thread-self').split('/').pop());
    const other = 1; // pid 1: not a thread of this process
    expect(takeProgramSeat(seats)).toBe(0);
    expect(takeProgramSeat(seats, own)).toBe(0);
    expect(takeProgramSeat(seats, other)).toBe(1);
  });
});
