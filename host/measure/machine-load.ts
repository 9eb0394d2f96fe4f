// The machine as measured: a latency figure taken while other programs held the cores is a
// figure of that machine at that moment, so the summary records the load average around the
// run and the CPU time the process received against the time its workers spent on events, and
// the report says when the machine was busy.

import os from 'node:os';

export interface MachineLoad {
  cores: number;
  /** 1-minute load average just before the run */
  loadAverageStart: number;
  /** 1-minute load average just after the run (it includes the run's own threads) */
  loadAverageEnd: number;
  /** CPU time the whole process (main thread and workers) received during the run */
  cpuSeconds: number;
  wallSeconds: number;
  /** wall time the workers spent on events, summed over events (every stage, in the worker) */
  workerBusySeconds: number;
  /**
   * open loop on Linux: the serving threads' time ready to run while another thread held the
   * core, summed (thread-cpu-wait.ts), and their time serving (threads × the run's wall time)
   */
  workerCpuWaitSeconds?: number;
  workerServeSeconds?: number;
  /**
   * an engine program (--engine exec:): its CPU time is its own process's, not in cpuSeconds,
   * and the workers' time on events includes waiting for it, so their CPU share is not judged
   */
  programCpuNote?: string;
  busy: boolean;
  /** why the machine counts as busy, in words; null when it does not */
  busyReason: string | null;
}

/**
 * A worker on an idle core gets CPU for all its busy wall time; the process's CPU time also
 * holds the main thread's, so a share below this means the workers were descheduled for a
 * good part of their events.
 */
export const BUSY_CPU_SHARE = 0.8;
/** Serving threads that waited for a CPU longer than this share of their time serving were kept off the cores. */
export const BUSY_WAIT_SHARE = 0.1;
export const PROGRAM_CPU_NOTE = "the engine program's CPU is not counted (another process): the process's CPU against its workers' time on events, which holds the waits for the program, is not judged";

function coresOf(): number {
  return typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length;
}

/** Started just before the timed run, finished just after. */
export class MachineLoadProbe {
  private readonly loadStart = os.loadavg()[0];
  private readonly cpuStart = process.cpuUsage();
  private readonly wallStartNs = process.hrtime.bigint();

  /** engineProgram: the events go to an outside program, whose CPU time this process does not see */
  constructor(private readonly engineProgram = false) {}

  /**
   * workerBusyNs: the workers' wall time on events, summed (from the run's stage times);
   * cpuWait: the serving threads' wait for a CPU and their number, when measured
   */
  finish(workerBusyNs: number, cpuWait?: { workersNs: number; servingThreads: number }): MachineLoad {
    const cpu = process.cpuUsage(this.cpuStart);
    const wallSeconds = Number(process.hrtime.bigint() - this.wallStartNs) / 1e9;
    return judgeMachineLoad({
      cores: coresOf(),
      loadAverageStart: this.loadStart,
      loadAverageEnd: os.loadavg()[0],
      cpuSeconds: (cpu.user + cpu.system) / 1e6,
      wallSeconds,
      workerBusySeconds: workerBusyNs / 1e9,
      ...(this.engineProgram ? { programCpuNote: PROGRAM_CPU_NOTE } : {}),
      ...(cpuWait === undefined ? {} : { workerCpuWaitSeconds: cpuWait.workersNs / 1e9, workerServeSeconds: cpuWait.servingThreads * wallSeconds }),
    });
  }
}

function round(value: number, digits: number): number {
  const scale = 10 ** digits;
  return Math.round(value * scale) / scale;
}

/**
 * Busy when the load of other programs exceeded the cores, or the workers got markedly less
 * CPU than wall time. The load at the end counts the run's own threads, about its CPU time
 * over its wall time; that much is taken off before comparing with the cores.
 */
export function judgeMachineLoad(measured: Omit<MachineLoad, 'busy' | 'busyReason'>): MachineLoad {
  const { cores, loadAverageStart, loadAverageEnd, cpuSeconds, wallSeconds, workerBusySeconds, workerCpuWaitSeconds, workerServeSeconds, programCpuNote } = measured;
  const ownThreads = wallSeconds > 0 ? cpuSeconds / wallSeconds : 0;
  const othersAtEnd = loadAverageEnd - ownThreads;
  const reasons: string[] = [];
  if (loadAverageStart > cores) reasons.push(`load average ${loadAverageStart.toFixed(2)} before the run on ${cores} cores`);
  else if (othersAtEnd > cores) reasons.push(`load average ${loadAverageEnd.toFixed(2)} after the run on ${cores} cores, ${othersAtEnd.toFixed(2)} of it not this run's`);
  if (programCpuNote === undefined && workerBusySeconds > 0 && cpuSeconds < BUSY_CPU_SHARE * workerBusySeconds) {
    reasons.push(`the process got ${cpuSeconds.toFixed(2)} s of CPU for ${workerBusySeconds.toFixed(2)} s its workers spent on events`);
  }
  if (workerCpuWaitSeconds !== undefined && workerServeSeconds !== undefined && workerServeSeconds > 0 && workerCpuWaitSeconds > BUSY_WAIT_SHARE * workerServeSeconds) {
    reasons.push(`the workers waited ${workerCpuWaitSeconds.toFixed(2)} s for a CPU in ${workerServeSeconds.toFixed(2)} s of serving`);
  }
  return {
    cores,
    loadAverageStart: round(loadAverageStart, 2),
    loadAverageEnd: round(loadAverageEnd, 2),
    cpuSeconds: round(cpuSeconds, 3),
    wallSeconds: round(wallSeconds, 3),
    workerBusySeconds: round(workerBusySeconds, 3),
    ...(workerCpuWaitSeconds === undefined || workerServeSeconds === undefined ? {} : { workerCpuWaitSeconds: round(workerCpuWaitSeconds, 3), workerServeSeconds: round(workerServeSeconds, 3) }),
    ...(programCpuNote === undefined ? {} : { programCpuNote }),
    busy: reasons.length > 0,
    busyReason: reasons.length > 0 ? reasons.join('; ') : null,
  };
}

/** Shards of one job: the highest loads, CPU and busy time added, busy when any shard was. */
export function combineMachineLoads(a: MachineLoad, b: MachineLoad): MachineLoad {
  const reasons = [a.busyReason, b.busyReason].filter((r): r is string => r !== null);
  return {
    cores: Math.max(a.cores, b.cores),
    loadAverageStart: Math.max(a.loadAverageStart, b.loadAverageStart),
    loadAverageEnd: Math.max(a.loadAverageEnd, b.loadAverageEnd),
    cpuSeconds: round(a.cpuSeconds + b.cpuSeconds, 3),
    wallSeconds: Math.max(a.wallSeconds, b.wallSeconds),
    workerBusySeconds: round(a.workerBusySeconds + b.workerBusySeconds, 3),
    ...(a.workerCpuWaitSeconds !== undefined && b.workerCpuWaitSeconds !== undefined && a.workerServeSeconds !== undefined && b.workerServeSeconds !== undefined
      ? { workerCpuWaitSeconds: round(a.workerCpuWaitSeconds + b.workerCpuWaitSeconds, 3), workerServeSeconds: round(a.workerServeSeconds + b.workerServeSeconds, 3) } : {}),
    ...(a.programCpuNote !== undefined || b.programCpuNote !== undefined ? { programCpuNote: a.programCpuNote ?? b.programCpuNote } : {}),
    busy: a.busy || b.busy,
    busyReason: reasons.length > 0 ? reasons.join('; ') : null,
  };
}

/** a reason a merge already led with its shards: "shard 3: …" or "shards 0, 2: …" */
const SHARD_LED_REASON = /^shards? (\d+(?:, \d+)*): (.*)$/s;

/**
 * Merged shards' busy reasons, each once, led by the shards that gave it ("shards 0, 1: load
 * average …; shard 1: the process got …"); null when no shard was busy. A reason is one part
 * of a shard's busyReason (judgeMachineLoad joins them with "; ").
 */
export function shardBusyReasons(parts: readonly { shards: readonly number[]; busyReason: string | null }[]): string | null {
  const shardsOf = new Map<string, Set<number>>();
  for (const { shards, busyReason } of parts) {
    if (busyReason === null) continue;
    for (const part of busyReason.split('; ')) {
      const led = SHARD_LED_REASON.exec(part);
      const reason = led ? led[2] : part;
      const own = shardsOf.get(reason) ?? new Set<number>();
      for (const shard of led ? led[1].split(', ').map(Number) : shards) own.add(shard);
      shardsOf.set(reason, own);
    }
  }
  if (shardsOf.size === 0) return null;
  return [...shardsOf].map(([reason, shards]) => {
    const sorted = [...shards].sort((a, b) => a - b);
    return `shard${sorted.length === 1 ? '' : 's'} ${sorted.join(', ')}: ${reason}`;
  }).join('; ');
}
