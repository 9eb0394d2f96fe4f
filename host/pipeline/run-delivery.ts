// The main thread's side of a run's results: each batch's outcome, delivered by the pool in
// batch order, is tallied (events, stage times, latency, budget, check), its problems become
// one line each, its disagreeing events go to the repro file and its jets to the jets file.

import { PILEUP_STAGES, RunTally, STAGES } from '../measure/run-tally.js';
import { describeDifference } from '../validate/bit-exact.js';
import type { OutputFile } from '../output/output-file.js';
import type { ReproWriter } from '../output/repro-writer.js';
import type { BatchOutcome } from './pool.js';
import { failedByIndex, tallyProgramBatch } from './exec-delivery.js';
import { ENGINE_STOPPED } from './exec-run-contract.js';
import { resultViews, STAGE_CHECK, STAGE_CLUSTER, STAGE_COUNT, STAGE_ENCODE, STAGE_INDEX, STAGE_PILEUP_FIRST, STAGE_GROOM, STATUS_OK, type BatchResult } from './worker-contract.js';

export interface DeliveryContext {
  /** the input as named in problem lines */
  label: string;
  /** open loop: the budget holds against end-to-end latency, else against the worker's time */
  openLoop: boolean;
  budgetNs: number;
  /** the repro file's path, for problem lines */
  reproPath: string | null;
  /** one line per problem (invalid event, failed batch, check difference) */
  onProblem?: (line: string) => void;
  /** every clustered event, in input order (per-event CSV, the report's thinned sample) */
  onEvent?: EventObserver;
  /** an engine program used up its restarts (exec-batch.ts): the run stops */
  onEngineStopped?: (message: string) => void;
}

/**
 * One clustered event: its number, towers that entered clustering, service time, and in an
 * open loop its scheduled arrival, start in a worker and result back on the main thread (ns
 * on the run's clock), and the ns it waited for a CPU on its worker's and the main thread
 * (-1 unknown); in a closed loop the three times are those of its batch, and the wait -1.
 */
export type EventObserver = (event: number, towers: number, serviceNs: number, scheduledNs: number, startNs: number, doneNs: number, cpuWaitNs: number) => void;

/** An event of the check sample, kept from the timed pass for the check pass (check-pass.ts). */
export interface SampledRecord {
  bytes: Uint8Array;
  /** its byte offset in the input */
  offset: number;
  /** its ordinal among the input's event records */
  record: number;
}

export class RunDelivery {
  readonly tally = new RunTally();
  /** byte offset of the last record whose result came back: the progress bar's bytes done */
  offsetDone = 0;
  /** the timed pass's check sample, in input order */
  readonly checkSample: SampledRecord[] = [];
  /** why an engine program stopped the run; null while it runs */
  engineStopped: string | null = null;
  /** the clusterer the workers report (the configured one until a result comes back) */
  engineName: string;
  /** the jets file's latest write that has not finished; the reader waits on it before a batch */
  private jetsPending: Promise<void> | undefined;
  private readonly reproPending: Promise<void>[] = [];

  constructor(
    private readonly context: DeliveryContext,
    engineName: string,
    private readonly jetsFile: OutputFile | null,
    jetsHeaderPending: Promise<void> | undefined,
    private readonly repro: ReproWriter | null,
  ) {
    this.engineName = engineName;
    this.jetsPending = jetsHeaderPending;
  }

  private problem(line: string): void {
    if (this.context.onProblem) this.context.onProblem(line);
  }

  /** The pool's deliver callback: one batch's outcome, in batch order. */
  deliver(outcome: BatchOutcome): void {
    const { count, result } = outcome;
    this.tally.read += count;
    this.offsetDone = outcome.recordOffsets[count - 1];
    if (result === null) {
      this.tallyFailedBatch(outcome);
      return;
    }
    this.engineName = result.engine;
    for (const { index, bytes } of result.sampled) {
      this.checkSample.push({ bytes, offset: outcome.recordOffsets[index], record: outcome.firstRecord + index });
    }
    if (result.exec) {
      tallyProgramBatch(this.tally, result.exec, (line) => this.problem(line));
      if (result.exec.engineError !== null && this.engineStopped === null) {
        this.engineStopped = result.exec.engineError;
        this.context.onEngineStopped?.(result.exec.engineError);
      }
    }
    this.tallyEvents(outcome, result);
    this.tallyBatch(result);
    this.writeDisagreeing(result);
    if (this.jetsFile && result.jetsBytes) {
      // the stream queues what it cannot take yet; the reader waits on this before the next batch
      const pending = this.jetsFile.write(result.jetsBytes);
      if (pending) this.jetsPending = pending;
    }
  }

  private tallyFailedBatch(outcome: BatchOutcome): void {
    const { count, firstRecord, recordOffsets } = outcome;
    this.tally.addFailedBatch({ firstRecord, events: count, offset: recordOffsets[0], reason: outcome.failure ?? 'unknown failure' });
    this.problem(`${this.context.label}, records ${firstRecord}..${firstRecord + count - 1}, byte ${recordOffsets[0]}: batch failed: ${outcome.failure}`);
  }

  /** per event: invalid ones listed; valid ones' stage times, latency and budget recorded */
  private tallyEvents(outcome: BatchOutcome, result: BatchResult): void {
    const { tally } = this;
    const { label, openLoop, budgetNs } = this.context;
    const views = resultViews(result.buffer, outcome.count, result.bufferOffset ?? 0);
    // most batches (every open-loop event) have no invalid events: no map for them
    let invalidReasons: Map<number, string> | null = null;
    if (result.invalid.length > 0) {
      invalidReasons = new Map();
      for (const entry of result.invalid) invalidReasons.set(entry.index, entry.reason);
    }
    const programFailed = failedByIndex(result.exec);
    for (let k = 0; k < outcome.count; k++) {
      const at = k * STAGE_COUNT;
      const failure = programFailed?.get(k);
      if (failure) {
        // the engine program failed on it: not invalid input, a failed event
        tally.addFailedEvent({ event: failure.event, reason: failure.reason, message: failure.message });
        // after the program stopped, the one line of the stop says it for all the events left
        if (failure.reason !== ENGINE_STOPPED) this.problem(failure.message);
        continue;
      }
      if (views.status[k] !== STATUS_OK) {
        const event = views.eventNumber[k] >= 0 ? views.eventNumber[k] : null;
        const reason = invalidReasons?.get(k) ?? 'invalid';
        tally.addInvalid({ event, record: outcome.firstRecord + k, offset: outcome.recordOffsets[k], reason });
        this.problem(`${label}, ${event === null ? `record ${outcome.firstRecord + k}` : `event ${event}`}, byte ${outcome.recordOffsets[k]}: ${reason}`);
        continue;
      }
      tally.ok++;
      const clusterNs = views.stageNs[at + STAGE_CLUSTER];
      tally.recordService(views.towersClustered[k], clusterNs);
      if (result.exec) {
        tally.roundTrip.recordNs(result.exec.roundTripNs[k]);
        tally.pipe.recordNs(Math.max(0, result.exec.roundTripNs[k] - clusterNs));
      }
      const onEvent = this.context.onEvent;
      if (onEvent) onEvent(views.eventNumber[k], views.towersClustered[k], clusterNs, outcome.startNs[k], outcome.workerStartNs ?? outcome.startNs[k], outcome.finishedNs, outcome.cpuWaitNs ?? -1);
      for (const stage of STAGES) {
        const index = STAGE_INDEX[stage];
        const value = views.stageNs[at + index];
        // stages that did not run for this event (check not sampled, no jets file) are not recorded
        if ((index === STAGE_CHECK || index === STAGE_ENCODE) && value === 0) continue;
        tally.stages[stage].recordNs(value);
      }
      // the pileup chain's stages, those that ran (0: off, or no pileup steps in this run)
      for (let stage = 0; stage < PILEUP_STAGES.length; stage++) {
        const value = views.stageNs[at + STAGE_PILEUP_FIRST + stage];
        if (value > 0) tally.pileupStages[PILEUP_STAGES[stage]].recordNs(value);
      }
      // grooming (spec section 12), when it ran: 0 in a run without --trim and --softdrop
      const groomNs = views.stageNs[at + STAGE_GROOM];
      if (groomNs > 0) tally.grooming.recordNs(groomNs);
      if (openLoop) {
        // one event per outcome, timed from its scheduled arrival (open-loop-feed.ts)
        const dueNs = outcome.startNs[k];
        const startNs = outcome.workerStartNs ?? dueNs;
        const endToEndNs = outcome.finishedNs - dueNs;
        tally.recordOpenLoopEvent(startNs - dueNs, outcome.finishedNs - startNs - clusterNs, endToEndNs);
        tally.recordHarnessOverhead(endToEndNs - clusterNs, outcome.cpuWaitNs ?? -1);
        if (endToEndNs > budgetNs) tally.overBudget++;
        continue;
      }
      // a closed loop has no arrivals: its events wait for the batches before them by design,
      // so the budget is held against the event's own time in the worker; the reference check
      // is validation of the tool's engine, not work a trigger would do, so it is left out
      let workerNs = 0;
      for (let s = 0; s < STAGE_COUNT; s++) if (s !== STAGE_CHECK) workerNs += views.stageNs[at + s];
      if (workerNs > budgetNs) tally.overBudget++;
    }
  }

  /** the batch's counts: jets, towers, check agreement and differences */
  private tallyBatch(result: BatchResult): void {
    const { tally } = this;
    tally.jets += result.jets;
    tally.towers.offered += result.towersOffered;
    tally.towers.belowThreshold += result.towersBelowThreshold;
    tally.towers.outsideAcceptance += result.towersOutsideAcceptance;
    tally.towers.clustered += result.towersOffered - result.towersBelowThreshold;
    this.tallyCheck(result);
  }

  /** check agreement and differences (a timed pass has none: its sample is checked apart) */
  private tallyCheck(result: BatchResult): void {
    const { tally } = this;
    tally.check.checked += result.checked;
    tally.check.agreeing += result.agreeing;
    tally.check.disagreeing += result.checked - result.agreeing;
    for (const difference of result.differences) {
      tally.addDifference(difference);
      this.problem(`${this.context.label}: check: ${describeDifference(difference.event, difference)}`);
    }
  }

  /**
   * The check pass's callback (check-pass.ts): one batch of the check sample, in input order;
   * only its check results, the reference's time per event and the repro file are taken, the
   * rest was counted in the timed pass.
   */
  deliverCheck(outcome: BatchOutcome): void {
    const { result } = outcome;
    if (result === null) {
      this.problem(`${this.context.label}, records ${outcome.firstRecord}.., byte ${outcome.recordOffsets[0]}: check failed: ${outcome.failure}`);
      return;
    }
    const views = resultViews(result.buffer, outcome.count, result.bufferOffset ?? 0);
    for (let k = 0; k < outcome.count; k++) {
      const checkNs = views.stageNs[k * STAGE_COUNT + STAGE_CHECK];
      if (views.status[k] === STATUS_OK && checkNs > 0) this.tally.stages.check.recordNs(checkNs);
    }
    this.tallyCheck(result);
    this.writeDisagreeing(result);
  }

  private writeDisagreeing(result: BatchResult): void {
    if (!this.repro) return;
    for (const { event, bytes } of result.disagreeing) {
      try {
        const pending = this.repro.writeRecord(event, bytes);
        if (pending) this.reproPending.push(pending);
      } catch (error) {
        this.problem(`${this.context.label}, event ${event}: not written to ${this.context.reproPath}: ${(error as Error).message}`);
      }
    }
  }

  /** Resolves when the jets file has taken what it was given so far. */
  async jetsWritten(): Promise<void> {
    if (this.jetsPending) { await this.jetsPending; this.jetsPending = undefined; }
  }

  /** After a failed run: neither output file is left behind. */
  async abortOutputs(): Promise<void> {
    await this.jetsFile?.abort();
    await this.repro?.abort();
  }

  async closeRepro(): Promise<void> {
    if (!this.repro) return;
    await Promise.all(this.reproPending);
    await this.repro.close();
  }

  async closeJets(): Promise<void> {
    await this.jetsFile?.close();
  }
}
