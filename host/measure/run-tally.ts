// The tally of a run: every batch result folds into one RunTally (counts, listed problems, latency
// histograms by stage and by multiplicity); tallies of shards add exactly (merge).

import { addToleranceFigures, emptyToleranceFigures, type FailedEvent, type ToleranceFigures } from './program-figures.js';
import { LatencyRecorder } from './latency.js';
import { MultiplicityBins } from './multiplicity-fit.js';
import { combineMachineLoads, type MachineLoad, type MachineLoadProbe } from './machine-load.js';
import { runSaturation, type Saturation } from './saturation-figures.js';
import type { TowerCounts } from '../types.js';
import type { JetDifference } from '../validate/bit-exact.js';

export const STAGES = ['decode', 'bin', 'cluster', 'check', 'encode'] as const;
export type Stage = (typeof STAGES)[number];
/**
 * The pileup chain's stages (spec part two), parts of 'cluster' (so not in the workers' busy
 * time twice): SoftKiller, ghosts + clustering, ρ from patches, ρ from kt jets (a second
 * clustering), subtraction. Recorded only for the stages that ran.
 */
export const PILEUP_STAGES = ['softkiller', 'clustering', 'rho-patches', 'rho-kt', 'subtraction'] as const;
export type PileupStage = (typeof PILEUP_STAGES)[number];

/** Invalid events and failed batches are listed up to this many each; the counts stay exact. */
export const LISTED_MAX = 1000;
/** Check differences kept for the summary. */
export const DIFFERENCES_MAX = 20;

export interface InvalidEvent {
  /** null when the record was too broken to say */
  event: number | null;
  /** ordinal of the record among the file's events (0 = the first event record) */
  record: number;
  /** byte offset of the record's start (uncompressed) */
  offset: number;
  reason: string;
}

export interface FailedBatch {
  /** ordinal of the batch's first record among the file's events */
  firstRecord: number;
  events: number;
  /** byte offset of the batch's first record */
  offset: number;
  reason: string;
}

export interface CheckedDifference extends JetDifference {
  event: number;
}

/**
 * With --cpu-wait-per-event, an event whose threads spent longer than this on a run queue counts
 * as delayed. Not a line between the harness and the machine: on a virtual machine a thread
 * woken onto a halted CPU waits tens of µs for it (bench:pool found over half the events past
 * this), on a shared one milliseconds; the split shows how much of the tail goes with waits.
 */
export const CPU_WAIT_DELAY_NS = 20_000;

export class RunTally {
  read = 0;
  ok = 0;
  invalid = 0;
  failed = 0;
  bytesRead = 0;
  jets = 0;
  readonly invalidEvents: InvalidEvent[] = [];
  readonly failedBatches: FailedBatch[] = [];
  readonly towers: TowerCounts = { offered: 0, belowThreshold: 0, outsideAcceptance: 0, clustered: 0 };
  readonly check = { checked: 0, agreeing: 0, disagreeing: 0, differences: [] as CheckedDifference[] };
  /**
   * service time: the engine's own time per event, measured inside the worker around
   * clustering (both loops)
   */
  readonly service = new LatencyRecorder();
  /** open loop, per event: scheduled arrival to its start in a worker */
  readonly wait = new LatencyRecorder();
  /** open loop, per event: end of its service to its result back on the main thread */
  readonly returnTrip = new LatencyRecorder();
  /** open loop, per event: scheduled arrival to its result back on the main thread */
  readonly endToEnd = new LatencyRecorder();
  /** open loop, a property of the harness: actual hand-over to the pool minus the scheduled time */
  readonly dispatchLateness = new LatencyRecorder();
  /** open loop, per event: end-to-end minus service, what the harness and the machine added */
  readonly overhead = new LatencyRecorder();
  /** ... of the events whose threads spent at most CPU_WAIT_DELAY_NS on a run queue */
  readonly overheadUndelayed = new LatencyRecorder();
  /**
   * open loop, per event where measured: ns its worker's and the main thread waited for a CPU
   * while it was on them (the events past CPU_WAIT_DELAY_NS: its count less overheadUndelayed's)
   */
  readonly cpuWait = new LatencyRecorder();
  /**
   * open loop, where the kernel keeps it: the serving threads' and the main thread's wait for a
   * CPU over the run (ns), and the serving threads' count; null when none was recorded, and
   * when a part of the run (a thread, a shard) could not give its figure (threadCpuWaitUnknown)
   */
  threadCpuWait: { workersNs: number; mainNs: number; servingThreads: number } | null = null;
  threadCpuWaitUnknown = false;
  /** towers that entered clustering, per clustered event (the main driver of service time) */
  readonly towersPerEvent = new LatencyRecorder();
  readonly stages: Record<Stage, LatencyRecorder> = {
    decode: new LatencyRecorder(),
    bin: new LatencyRecorder(),
    cluster: new LatencyRecorder(),
    check: new LatencyRecorder(),
    encode: new LatencyRecorder(),
  };
  readonly pileupStages: Record<PileupStage, LatencyRecorder> = {
    softkiller: new LatencyRecorder(),
    clustering: new LatencyRecorder(),
    'rho-patches': new LatencyRecorder(),
    'rho-kt': new LatencyRecorder(),
    subtraction: new LatencyRecorder(),
  };
  /** trimming and soft drop of each event's jets (spec section 12), part of 'cluster'; empty when off */
  readonly grooming = new LatencyRecorder();
  readonly multiplicity = new MultiplicityBins();
  /** an engine program (`--engine exec:`), per answered event: write of the event to read of its answer; service is the program's own time */
  readonly roundTrip = new LatencyRecorder();
  /** the same events: round trip minus the program's own time, the pipe's and the codecs' cost */
  readonly pipe = new LatencyRecorder();
  /** events an engine program failed on (part of `failed`), listed up to LISTED_MAX */
  readonly failedEvents: FailedEvent[] = [];
  /** an engine program's restarts, all workers */
  engineRestarts = 0;
  /** tolerance mode's sums (spec section 7); null when the check is bit for bit */
  tolerance: ToleranceFigures | null = null;
  /**
   * events over the budget (exact count, not from buckets): open loop, their end-to-end latency
   * from the scheduled arrival; closed loop (no arrivals), their own time in the worker
   */
  overBudget = 0;
  /** open loop: offered against sustained rate (recordRates); null in a closed loop */
  saturation: Saturation | null = null;
  /** the machine as measured (machine-load.ts); null until the run ends */
  machineLoad: MachineLoad | null = null;

  /** One clustered event, either loop: its tower multiplicity and service time. */
  recordService(towers: number, serviceNs: number): void {
    this.service.recordNs(serviceNs);
    this.towersPerEvent.recordNs(towers);
    this.multiplicity.record(towers, serviceNs);
  }

  /** One clustered event of an open loop: wait + service + return = end-to-end, all from its scheduled arrival. */
  recordOpenLoopEvent(waitNs: number, returnNs: number, endToEndNs: number): void {
    this.wait.recordNs(waitNs);
    this.returnTrip.recordNs(returnNs);
    this.endToEnd.recordNs(endToEndNs);
  }

  /**
   * One clustered event of an open loop: end-to-end minus service, and how long its threads
   * waited for a CPU (-1: not measured; then it counts in neither split).
   */
  recordHarnessOverhead(overheadNs: number, cpuWaitNs: number): void {
    this.overhead.recordNs(overheadNs);
    if (cpuWaitNs < 0) return;
    this.cpuWait.recordNs(cpuWaitNs);
    if (cpuWaitNs <= CPU_WAIT_DELAY_NS) this.overheadUndelayed.recordNs(overheadNs);
  }

  /** Open loop, once at the end: the threads' wait for a CPU over the run (-1: unknown). */
  recordThreadCpuWait(workersNs: number, mainNs: number, servingThreads: number): void {
    const known = workersNs >= 0 && mainNs >= 0;
    this.threadCpuWait = known ? { workersNs, mainNs, servingThreads } : null;
    this.threadCpuWaitUnknown = !known;
  }

  /** Open loop, per event handed to the pool: how late the harness was against its schedule. */
  recordDispatchLatenessNs(latenessNs: number): void {
    this.dispatchLateness.recordNs(latenessNs);
  }

  /**
   * Open loop, once at the end: the rate the schedule offered, the rate results came back, and
   * whether the backlog of due events grew through the run. Saturated when either says so.
   */
  recordRates(offeredHz: number, sustainedHz: number, backlogGrew: boolean): void {
    this.saturation = runSaturation(offeredHz, sustainedHz, backlogGrew);
  }

  /** Once, right after the timed run: the machine as measured (the workers' busy time from the stage times). */
  recordMachineLoad(probe: MachineLoadProbe): void {
    let workerBusyNs = 0;
    for (const stage of STAGES) workerBusyNs += this.stages[stage].sumNs;
    const cpuWait = this.threadCpuWait;
    this.machineLoad = probe.finish(workerBusyNs, cpuWait ? { workersNs: cpuWait.workersNs, servingThreads: cpuWait.servingThreads } : undefined);
  }

  addInvalid(entry: InvalidEvent): void {
    this.invalid++;
    if (this.invalidEvents.length < LISTED_MAX) this.invalidEvents.push(entry);
  }

  addFailedBatch(entry: FailedBatch): void {
    this.failed += entry.events;
    if (this.failedBatches.length < LISTED_MAX) this.failedBatches.push(entry);
  }

  addFailedEvent(entry: FailedEvent): void {
    this.failed++;
    if (this.failedEvents.length < LISTED_MAX) this.failedEvents.push(entry);
  }

  addDifference(entry: CheckedDifference): void {
    if (this.check.differences.length < DIFFERENCES_MAX) this.check.differences.push(entry);
  }

  merge(other: RunTally): void {
    this.read += other.read;
    this.ok += other.ok;
    this.invalid += other.invalid;
    this.failed += other.failed;
    // every shard reads the whole file (and skips the others' batches): the bytes are read once
    this.bytesRead = Math.max(this.bytesRead, other.bytesRead);
    this.jets += other.jets;
    for (const entry of other.invalidEvents) if (this.invalidEvents.length < LISTED_MAX) this.invalidEvents.push(entry);
    this.invalidEvents.sort((a, b) => a.record - b.record);
    for (const entry of other.failedBatches) if (this.failedBatches.length < LISTED_MAX) this.failedBatches.push(entry);
    this.failedBatches.sort((a, b) => a.firstRecord - b.firstRecord);
    this.towers.offered += other.towers.offered;
    this.towers.belowThreshold += other.towers.belowThreshold;
    this.towers.outsideAcceptance += other.towers.outsideAcceptance;
    this.towers.clustered += other.towers.clustered;
    this.check.checked += other.check.checked;
    this.check.agreeing += other.check.agreeing;
    this.check.disagreeing += other.check.disagreeing;
    for (const entry of other.check.differences) this.addDifference(entry);
    this.check.differences.sort((a, b) => a.event - b.event);
    this.service.merge(other.service);
    this.wait.merge(other.wait);
    this.returnTrip.merge(other.returnTrip);
    this.endToEnd.merge(other.endToEnd);
    this.dispatchLateness.merge(other.dispatchLateness);
    this.overhead.merge(other.overhead);
    this.overheadUndelayed.merge(other.overheadUndelayed);
    this.cpuWait.merge(other.cpuWait);
    // shards side by side: their threads' waits add; one shard without its figure leaves the sum unknown
    this.threadCpuWaitUnknown ||= other.threadCpuWaitUnknown;
    if (this.threadCpuWaitUnknown) this.threadCpuWait = null;
    else if (other.threadCpuWait) {
      const own = this.threadCpuWait ?? { workersNs: 0, mainNs: 0, servingThreads: 0 };
      const theirs = other.threadCpuWait;
      this.threadCpuWait = { workersNs: own.workersNs + theirs.workersNs, mainNs: own.mainNs + theirs.mainNs, servingThreads: own.servingThreads + theirs.servingThreads };
    }
    this.towersPerEvent.merge(other.towersPerEvent);
    for (const stage of STAGES) this.stages[stage].merge(other.stages[stage]);
    for (const stage of PILEUP_STAGES) this.pileupStages[stage].merge(other.pileupStages[stage]);
    this.grooming.merge(other.grooming);
    this.multiplicity.merge(other.multiplicity);
    this.roundTrip.merge(other.roundTrip);
    this.pipe.merge(other.pipe);
    for (const entry of other.failedEvents) if (this.failedEvents.length < LISTED_MAX) this.failedEvents.push(entry);
    this.failedEvents.sort((a, b) => a.event - b.event);
    this.engineRestarts += other.engineRestarts;
    if (other.tolerance) {
      if (!this.tolerance) this.tolerance = emptyToleranceFigures();
      addToleranceFigures(this.tolerance, other.tolerance);
    }
    this.overBudget += other.overBudget;
    // the shards' rates are merged with their wall times, which a tally does not hold (summary-merge.ts)
    if (other.machineLoad) this.machineLoad = this.machineLoad ? combineMachineLoads(this.machineLoad, other.machineLoad) : { ...other.machineLoad };
  }
}
