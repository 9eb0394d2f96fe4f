// The machine-readable summary of a run (--json), rendered from its tally (run-tally.ts); a merge
// of shard summaries (summary-merge.ts) renders through the same code.
//
// Invariant, checked on every render: events.ok + events.invalid + events.failed = events.read.

import os from 'node:os';
import type { EncodedLatency, LatencyStats } from './latency.js';
import { fitMultiplicity, multiplicityTable, type MultiplicityBin } from './multiplicity-fit.js';
import { STAGES, type CheckedDifference, type FailedBatch, type InvalidEvent, type RunTally, type Stage } from './run-tally.js';
import type { TowerCounts } from '../types.js';

export interface MachineInfo {
  cpuModel: string;
  cores: number;
  node: string;
  platform: string;
  arch: string;
}

export function describeMachine(): MachineInfo {
  const cpus = os.cpus();
  return {
    cpuModel: cpus[0]?.model?.trim() ?? 'unknown',
    cores: typeof os.availableParallelism === 'function' ? os.availableParallelism() : cpus.length,
    node: process.version,
    platform: process.platform,
    arch: process.arch,
  };
}

/** Everything that decides what a run computes and how it is timed. */
export interface RunConfiguration {
  file: string;
  engine: string;
  grid: { etaMin: number; etaMax: number; etaBins: number; phiBins: number };
  settings: { p: number; radius: number; ptMin: number; threshold: number; recombination: string };
  workers: number;
  batch: number;
  arrival: { mode: 'closed' | 'fixed' | 'poisson'; rateHz: number | null; seed: number | null };
  budgetUs: number | null;
  check: { mode: 'all' | 'fraction' | 'none'; fraction: number; seed: number };
  shard: { index: number; count: number };
  maxEvents: number | null;
  out: string | null;
  /** the input's header label, and its number of event records when read to its end */
  input: { label: string; records: number | null };
}

export interface RunSummary {
  format: 'jetlag-run-summary';
  version: 1;
  partial: boolean;
  partialReason: string | null;
  configuration: RunConfiguration;
  /** shards this summary covers: one for a run, several after a merge */
  shards: { index: number; count: number }[];
  machine: MachineInfo;
  machines?: MachineInfo[];
  events: { read: number; ok: number; invalid: number; failed: number };
  invalidEvents: InvalidEvent[];
  failedBatches: FailedBatch[];
  towers: TowerCounts;
  jets: number;
  check: { checked: number; agreeing: number; disagreeing: number; differences: CheckedDifference[] };
  latency: {
    cluster: LatencyStats;
    endToEnd: LatencyStats;
    /** open loop: scheduled arrival to hand-over to the pool (part of endToEnd): waiting for room in the pool, and timer lateness */
    dispatchLag: LatencyStats;
    stages: Record<Stage, LatencyStats>;
  };
  /** measuredOn: 'end-to-end' (open loop) or 'worker time' (closed loop: decode to encode of the event itself, the reference check left out) */
  budget: { budgetUs: number; measuredOn: 'end-to-end' | 'worker time'; over: number; fractionOver: number } | null;
  /** events read / wall time from the first dispatch to the last result; bytesRead: uncompressed offset of the last record read */
  throughput: { eventsPerSecond: number; wallSeconds: number; bytesRead: number };
  multiplicity: { bins: MultiplicityBin[]; alpha: number | null; binsUsed: number };
  histograms: {
    cluster: EncodedLatency;
    endToEnd: EncodedLatency;
    dispatchLag: EncodedLatency;
    stages: Record<Stage, EncodedLatency>;
    multiplicity: { bin: number; sumTowers: number; histogram: EncodedLatency }[];
  };
  findRate?: FindRateResult;
  scanWorkers?: ScanWorkersResult;
}

export interface FindRateResult {
  budgetUs: number;
  /** highest rate tried whose end-to-end p99 stayed within the budget; null if none did */
  rateHz: number | null;
  trials: { rateHz: number; p99_us: number | null; withinBudget: boolean; events: number }[];
}

export interface ScanWorkersResult {
  points: { workers: number; eventsPerSecond: number; speedup: number; cluster_p50_us: number | null; endToEnd_p99_us: number | null }[];
}

export interface RenderContext {
  configuration: RunConfiguration;
  shards: { index: number; count: number }[];
  machine: MachineInfo;
  machines?: MachineInfo[];
  partial: boolean;
  partialReason: string | null;
  wallSeconds: number;
  /** when given (a merge), used instead of events / wallSeconds */
  eventsPerSecond?: number;
}

export function renderSummary(tally: RunTally, context: RenderContext): RunSummary {
  const events = { read: tally.read, ok: tally.ok, invalid: tally.invalid, failed: tally.failed };
  if (events.ok + events.invalid + events.failed !== events.read) {
    throw new Error(`event counts do not add up: ok ${events.ok} + invalid ${events.invalid} + failed ${events.failed} != read ${events.read}`);
  }
  const stagesStats = {} as Record<Stage, LatencyStats>;
  const stagesEncoded = {} as Record<Stage, EncodedLatency>;
  for (const stage of STAGES) {
    stagesStats[stage] = tally.stages[stage].stats();
    stagesEncoded[stage] = tally.stages[stage].encode();
  }
  const bins = multiplicityTable(tally.multiplicity);
  const fit = fitMultiplicity(bins);
  const budgetUs = context.configuration.budgetUs;
  const timed = tally.endToEnd.count;
  const wallSeconds = context.wallSeconds;
  return {
    format: 'jetlag-run-summary',
    version: 1,
    partial: context.partial,
    partialReason: context.partialReason,
    configuration: context.configuration,
    shards: context.shards,
    machine: context.machine,
    ...(context.machines ? { machines: context.machines } : {}),
    events,
    invalidEvents: tally.invalidEvents,
    failedBatches: tally.failedBatches,
    towers: { ...tally.towers },
    jets: tally.jets,
    check: { ...tally.check },
    latency: { cluster: tally.cluster.stats(), endToEnd: tally.endToEnd.stats(), dispatchLag: tally.dispatchLag.stats(), stages: stagesStats },
    budget: budgetUs === null ? null : {
      budgetUs,
      measuredOn: context.configuration.arrival.mode === 'closed' ? 'worker time' : 'end-to-end',
      over: tally.overBudget,
      fractionOver: timed === 0 ? 0 : tally.overBudget / timed,
    },
    throughput: {
      eventsPerSecond: context.eventsPerSecond ?? (wallSeconds > 0 ? events.read / wallSeconds : 0),
      wallSeconds,
      bytesRead: tally.bytesRead,
    },
    multiplicity: { bins, alpha: fit.alpha, binsUsed: fit.binsUsed },
    histograms: {
      cluster: tally.cluster.encode(),
      endToEnd: tally.endToEnd.encode(),
      dispatchLag: tally.dispatchLag.encode(),
      stages: stagesEncoded,
      multiplicity: tally.multiplicity.recorders.flatMap((recorder, bin) =>
        recorder ? [{ bin, sumTowers: tally.multiplicity.sumTowers[bin], histogram: recorder.encode() }] : []),
    },
  };
}
