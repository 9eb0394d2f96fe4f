// The summary's figures of the harness itself in an open loop (summary.ts `harness`): its
// dispatch lateness, end-to-end minus service per event, and how long the run's threads waited
// for a CPU (thread-cpu-wait.ts).

import { LatencyRecorder, type EncodedLatency, type LatencyStats } from './latency.js';
import { CPU_WAIT_DELAY_NS, type RunTally } from './run-tally.js';

/**
 * How long the run's threads were ready to run while another thread held the core (Linux's
 * run-queue time). workersMs / mainMs: the serving threads (summed) and the main thread over
 * the run; null when a thread or a merged shard could not give its figure. perEvent (`run
 * --cpu-wait-per-event`): per event, on its worker's thread from the start of its wait for the
 * arrival to its result's write, and on the main thread from its last blocking wait to its
 * look at the result; `delayed` events spent more than `delayedOverUs` on a run queue,
 * `overheadUndelayed` is end-to-end minus service of the others (queueing behind a delayed
 * event stays in it).
 */
export interface CpuWaitFigures {
  workersMs: number | null;
  mainMs: number | null;
  servingThreads: number | null;
  perEvent?: { events: number; delayed: number; delayedOverUs: number; wait: LatencyStats; overheadUndelayed: LatencyStats };
}

export interface HarnessFigures {
  /** open loop: actual hand-over to the pool minus the scheduled time */
  dispatchLateness: LatencyStats;
  /** open loop, per event: end-to-end minus service (wait + return: what the harness and the machine added) */
  overhead?: LatencyStats;
  cpuWait?: CpuWaitFigures;
}

export function harnessFigures(tally: RunTally, openLoop: boolean): HarnessFigures {
  if (!openLoop) return { dispatchLateness: new LatencyRecorder().stats() };
  const totals = tally.threadCpuWait;
  const measured = totals !== null || tally.threadCpuWaitUnknown || tally.cpuWait.count > 0;
  return {
    dispatchLateness: tally.dispatchLateness.stats(),
    overhead: tally.overhead.stats(),
    ...(measured ? {
      cpuWait: {
        workersMs: totals ? totals.workersNs / 1e6 : null,
        mainMs: totals ? totals.mainNs / 1e6 : null,
        servingThreads: totals ? totals.servingThreads : null,
        ...(tally.cpuWait.count > 0 ? {
          perEvent: {
            events: tally.cpuWait.count, delayed: tally.cpuWait.count - tally.overheadUndelayed.count, delayedOverUs: CPU_WAIT_DELAY_NS / 1e3,
            wait: tally.cpuWait.stats(), overheadUndelayed: tally.overheadUndelayed.stats(),
          },
        } : {}),
      },
    } : {}),
  };
}

export function harnessHistograms(tally: RunTally): { overhead: EncodedLatency; cpuWait: EncodedLatency; overheadUndelayed: EncodedLatency } {
  return { overhead: tally.overhead.encode(), cpuWait: tally.cpuWait.encode(), overheadUndelayed: tally.overheadUndelayed.encode() };
}

/** The reverse, for a merge: a summary's harness histograms and totals back into its tally. */
export function restoreHarnessFigures(
  tally: RunTally, harness: HarnessFigures, histograms: Partial<ReturnType<typeof harnessHistograms>>, open: boolean, where: string,
): void {
  for (const name of ['overhead', 'cpuWait', 'overheadUndelayed'] as const) {
    const encoded = histograms[name];
    if (encoded) tally[name].merge(LatencyRecorder.decode(encoded, `${where}: histograms.${name}`));
  }
  const cpuWait = harness.cpuWait;
  if (cpuWait && cpuWait.workersMs !== null && cpuWait.mainMs !== null && cpuWait.servingThreads !== null) {
    tally.threadCpuWait = { workersNs: cpuWait.workersMs * 1e6, mainNs: cpuWait.mainMs * 1e6, servingThreads: cpuWait.servingThreads };
  } else {
    // an open loop without the totals (a thread's figure lost, or a summary from before them): the sum is unknown
    tally.threadCpuWaitUnknown = open;
  }
}
