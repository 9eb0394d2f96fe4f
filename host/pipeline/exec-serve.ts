// An open-loop worker whose engine is a program (`run --engine exec:… --rate|--poisson`): it
// serves the event ring as open-loop-serve.ts does (claim when idle, read before the event is
// due, wait for its arrival, then run it), but each event's run is the program's answer: the
// worker writes the event and waits for the answer in a blocking read (exec-process.ts); its
// event loop is needed only to settle a fault (the program's exit status).

import { readBatch } from './cluster-batch.js';
import { execWorkerOf, finishExecBatch } from './exec-batch.js';
import { sharedClockNs } from './shared-clock.js';
import { claimRingEvent, describeFailure, leaveRingSeat, postRingOutcome, takeRingSeat, waitForArrival } from './open-loop-serve.js';
import type { EventMessage, ServeOutcome, ServeTask, WorkerConfig } from './worker-contract.js';
import type { ExecWorkerConfig } from './exec-run-contract.js';

/** Serves the ring through the program until the ring is closed and every event claimed; returns the events served and the thread's wait for a CPU. */
export async function serveRingWithProgram(config: WorkerConfig, exec: ExecWorkerConfig, serve: ServeTask['serve']): Promise<ServeOutcome> {
  const running = await execWorkerOf(config, exec);
  const seat = takeRingSeat(running.state, serve);
  let served = 0;
  for (let event = claimRingEvent(seat); event !== null; event = claimRingEvent(seat)) {
    const { ordinal, claimedEarly } = event;
    let message: EventMessage;
    let startNs = 0;
    try {
      const work = readBatch(running.state, event.task);
      waitForArrival(seat, event.dueNs);
      startNs = sharedClockNs();
      message = { ordinal, startNs, claimedEarly, result: await finishExecBatch(running, work), failure: null };
    } catch (error) {
      message = { ordinal, startNs: startNs || sharedClockNs(), claimedEarly, result: null, failure: describeFailure(error) };
    }
    postRingOutcome(seat, message);
    served++;
  }
  return leaveRingSeat(seat, served);
}
