// An open-loop worker whose engine is a program (`run --engine exec:… --rate|--poisson`): it
// serves the event ring as open-loop-serve.ts does (claim when idle, read before the event is
// due, wait for its arrival, then run it), but each event's run is the program's answer,
// awaited: unlike the in-process engines, this worker returns to its event loop while the
// program works, because that is where the program's output is read.

import { claimNext, copyRecord, DATA_LENGTH, DUE_NS, RECORD_OFFSET, ringViews, SLOT_COUNT, SLOT_FIELDS, WORKER_HOLDS } from './event-ring.js';
import { readBatch } from './cluster-batch.js';
import { execWorkerOf, finishExecBatch } from './exec-batch.js';
import { sharedClockNs } from './shared-clock.js';
import { SPIN_BEFORE_DUE_NS } from './open-loop-serve.js';
import { batchDataStart, batchViews, type EventMessage, type ServeTask, type WorkerConfig } from './worker-contract.js';
import type { ExecWorkerConfig } from './exec-run-contract.js';

function waitUntil(dueNs: number, sleeper: Int32Array): void {
  const sleepNs = dueNs - SPIN_BEFORE_DUE_NS - sharedClockNs();
  if (sleepNs > 0) Atomics.wait(sleeper, 0, 0, sleepNs / 1e6);
  while (sharedClockNs() < dueNs) { /* spin: the last stretch before the arrival */ }
}

/** Serves the ring through the program until the ring is closed and every event claimed; returns the events served. */
export async function serveRingWithProgram(config: WorkerConfig, exec: ExecWorkerConfig, serve: ServeTask['serve']): Promise<number> {
  const running = await execWorkerOf(config, exec);
  const { state } = running;
  const views = ringViews(serve.ring);
  const { control, slots } = views;
  const holds = WORKER_HOLDS + serve.workerIndex;
  const sleeper = new Int32Array(new SharedArrayBuffer(4));
  const dataStart = batchDataStart(1);
  if (state.validEvent.length < 1) {
    state.validEvent = new Int32Array(1);
    state.batchStart = new Int32Array(2);
  }
  let served = 0;
  for (;;) {
    const ordinal = claimNext(control);
    if (ordinal < 0) break;
    Atomics.store(control, holds, ordinal + 1);
    const at = (ordinal % SLOT_COUNT) * SLOT_FIELDS;
    const dueNs = slots[at + DUE_NS];
    const length = slots[at + DATA_LENGTH];
    const buffer = new ArrayBuffer(dataStart + length);
    const batch = batchViews(buffer, 1, dataStart);
    batch.recordOffset[0] = slots[at + RECORD_OFFSET];
    batch.recordStart[0] = 0;
    batch.recordStart[1] = length;
    copyRecord(views, ordinal, batch.data);
    const claimedEarly = sharedClockNs() < dueNs;
    let message: EventMessage;
    let startNs = 0;
    try {
      const work = readBatch(state, { batchIndex: ordinal, count: 1, dataStart, buffer });
      waitUntil(dueNs, sleeper);
      startNs = sharedClockNs();
      message = { ordinal, startNs, claimedEarly, result: await finishExecBatch(running, work), failure: null };
    } catch (error) {
      const text = error instanceof Error ? error.message.split('\n')[0] || error.name : String(error);
      message = { ordinal, startNs: startNs || sharedClockNs(), claimedEarly, result: null, failure: text };
    }
    const result = message.result;
    const transfer = result ? (result.jetsBytes ? [result.buffer, result.jetsBytes.buffer as ArrayBuffer] : [result.buffer]) : [];
    serve.port.postMessage(message, transfer);
    Atomics.store(control, holds, 0);
    served++;
  }
  return served;
}
