// The tally of a run: every batch result folds into one RunTally (counts, listed problems, latency
// histograms by stage and by multiplicity); tallies of shards add exactly (merge).

import { LatencyRecorder } from './latency.js';
import { MultiplicityBins } from './multiplicity-fit.js';
import type { TowerCounts } from '../types.js';
import type { JetDifference } from '../validate/bit-exact.js';

export const STAGES = ['decode', 'bin', 'cluster', 'check', 'encode'] as const;
export type Stage = (typeof STAGES)[number];

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
  /** per-event clustering time inside the worker */
  readonly cluster = new LatencyRecorder();
  /** per event, scheduled (open loop) or dispatch (closed loop) time to its result back on the host */
  readonly endToEnd = new LatencyRecorder();
  /** open loop: how late the host handed each event to the pool after its scheduled arrival */
  readonly dispatchLag = new LatencyRecorder();
  readonly stages: Record<Stage, LatencyRecorder> = {
    decode: new LatencyRecorder(),
    bin: new LatencyRecorder(),
    cluster: new LatencyRecorder(),
    check: new LatencyRecorder(),
    encode: new LatencyRecorder(),
  };
  readonly multiplicity = new MultiplicityBins();
  /**
   * events over the budget (exact count, not from buckets): open loop, their end-to-end latency
   * from the scheduled arrival; closed loop (no arrivals), their own time in the worker
   */
  overBudget = 0;

  addInvalid(entry: InvalidEvent): void {
    this.invalid++;
    if (this.invalidEvents.length < LISTED_MAX) this.invalidEvents.push(entry);
  }

  addFailedBatch(entry: FailedBatch): void {
    this.failed += entry.events;
    if (this.failedBatches.length < LISTED_MAX) this.failedBatches.push(entry);
  }

  addDifference(entry: CheckedDifference): void {
    if (this.check.differences.length < DIFFERENCES_MAX) this.check.differences.push(entry);
  }

  merge(other: RunTally): void {
    this.read += other.read;
    this.ok += other.ok;
    this.invalid += other.invalid;
    this.failed += other.failed;
    this.bytesRead += other.bytesRead;
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
    this.cluster.merge(other.cluster);
    this.endToEnd.merge(other.endToEnd);
    this.dispatchLag.merge(other.dispatchLag);
    for (const stage of STAGES) this.stages[stage].merge(other.stages[stage]);
    this.multiplicity.merge(other.multiplicity);
    this.overBudget += other.overBudget;
  }
}
