// The machine-readable summary of a run (--json), rendered from its tally (run-tally.ts); a merge
// of shard summaries (summary-merge.ts) renders through the same code.
//
// Invariant, checked on every render: events.ok + events.invalid + events.failed = events.read.

import os from 'node:os';
import { LatencyRecorder, type EncodedLatency, type LatencyStats } from './latency.js';
import { fitScaling, scalingSamples, type Scaling } from './scaling-fit.js';
import { harnessFigures, harnessHistograms, type HarnessFigures } from './harness-figures.js';
import { PILEUP_STAGES, STAGES, type PileupStage, type CheckedDifference, type FailedBatch, type InvalidEvent, type RunTally, type Stage } from './run-tally.js';
import type { Saturation } from './saturation-figures.js';
import type { MachineLoad } from './machine-load.js';
import { summarizeTolerance, type FailedEvent, type ToleranceSummary } from './program-figures.js';
import { plainHistograms, type PlainHistogram } from './plain-histogram.js';
import type { GroomingSettings, PileupSettings, TowerCounts } from '../types.js';

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
  /** the pileup steps around the clustering (spec part two); absent when none ran */
  pileup?: PileupSettings;
  /** trimming and soft drop of each reported jet (spec section 12); absent when none ran */
  grooming?: GroomingSettings;
  workers: number;
  /**
   * an engine program only (absent otherwise, and in summaries from before it): same when each
   * worker thread and its program were held on one CPU (--program-cpu same), else any
   */
  programCpu?: 'same' | 'any';
  /** an engine program only: --engine-in-flight, events written to it ahead of its answers (absent in summaries from before it: 1) */
  engineInFlight?: number;
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

/**
 * The summary's layout version. 2: latency.service (was cluster), latency.wait/return/endToEnd
 * open loop only, harness.dispatchLateness, saturation, scaling (was multiplicity),
 * towersPerEvent, machineLoad. 3: saturation's causes, shards and basis; findRate's workers
 * and ceiling; scanWorkers' service_p50_us and service_mean_us (were cluster_p50_us and an
 * always-empty endToEnd_p99_us).
 */
export const SUMMARY_VERSION = 3;
/** The versions merge reads: version 2 lacks only what merge fills in or does not read (saturation-figures.ts). */
export const MERGE_READS_VERSIONS = [2, 3] as const;

export interface TowersPerEvent {
  mean: number | null;
  p50: number | null;
  max: number | null;
}

export interface RunSummary {
  format: 'jetlag-run-summary';
  version: typeof SUMMARY_VERSION;
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
  check: {
    checked: number; agreeing: number; disagreeing: number; differences: CheckedDifference[];
    /** where the check ran against the timing: CHECK_APART_FROM_TIMING or CHECK_INSIDE_TIMING */
    timing: string;
    /** which events were checked: CHECK_SAMPLE_RULE with the configuration's check fraction and seed */
    sample: string;
    /** bit for bit against the reference, or tolerance mode (spec section 7; an engine program only); null: no check ran (--check none) */
    mode: 'bit-exact' | 'tolerance' | null;
    /** tolerance mode: compare's figures (agreement, efficiency, fake rate, response) */
    tolerance?: ToleranceSummary;
  };
  /** an engine program (`--engine exec:`): the events it failed on (listed up to 1000) and its restarts */
  failedEvents?: FailedEvent[];
  engineRestarts?: number;
  latency: {
    /** the engine's own time per event, measured inside the worker around clustering */
    service: LatencyStats;
    /** open loop only (empty in a closed loop): scheduled arrival to the event's start in a worker */
    wait: LatencyStats;
    /** open loop only: end of service to the result back on the main thread */
    return: LatencyStats;
    /** open loop only: scheduled arrival to the result back on the main thread, per event */
    endToEnd: LatencyStats;
    stages: Record<Stage, LatencyStats>;
    /** the pileup chain's stages that ran (parts of service; spec part two); absent without pileup steps */
    pileupStages?: Partial<Record<PileupStage, LatencyStats>>;
    /** trimming and soft drop per event (part of service; spec section 12); absent without grooming */
    grooming?: LatencyStats;
    /**
     * an engine program only: write of the event to its pipe to the read of its answer, per
     * answered event; service is then the program's own cluster_time_ns, and the difference is
     * the pipe's and the codecs' cost
     */
    roundTrip?: LatencyStats;
    /** an engine program only: per answered event, round trip minus its own time (the pipe's and the codecs' cost) */
    pipe?: LatencyStats;
  };
  /** the harness's own figures, apart from the events' (harness-figures.ts) */
  harness: HarnessFigures;
  /** open loop: offered against sustained rate; null in a closed loop */
  saturation: Saturation | null;
  /** towers that entered clustering, per clustered event */
  towersPerEvent: TowersPerEvent;
  /** the machine as measured around the run; null when not measured */
  machineLoad: MachineLoad | null;
  /** measuredOn: 'end-to-end' (open loop) or 'worker time' (closed loop: decode to encode of the event itself, the reference check left out) */
  budget: { budgetUs: number; measuredOn: 'end-to-end' | 'worker time'; over: number; fractionOver: number } | null;
  /**
   * events read / wall time from the first dispatch to the last result (a merge: all shards'
   * events over the longest shard's wall time, as `basis` says); bytesRead: uncompressed offset
   * of the last record read
   */
  throughput: { eventsPerSecond: number; wallSeconds: number; bytesRead: number; basis: string };
  /** service time ∝ N^alpha over tower multiplicity N */
  scaling: Scaling;
  histograms: {
    service: EncodedLatency;
    wait: EncodedLatency;
    return: EncodedLatency;
    endToEnd: EncodedLatency;
    dispatchLateness: EncodedLatency;
    /** open loop only (absent in summaries from before them) */
    overhead?: EncodedLatency;
    cpuWait?: EncodedLatency;
    overheadUndelayed?: EncodedLatency;
    towersPerEvent: EncodedLatency;
    stages: Record<Stage, EncodedLatency>;
    pileupStages?: Partial<Record<PileupStage, EncodedLatency>>;
    grooming?: EncodedLatency;
    /** an engine program only */
    roundTrip?: EncodedLatency;
    pipe?: EncodedLatency;
    multiplicity: { bin: number; sumTowers: number; histogram: EncodedLatency }[];
  };
  /** the latency histograms above as percentile tables and log-bin counts in µs, readable without an HDR library (plain-histogram.ts) */
  plainHistograms?: Record<string, PlainHistogram | Record<string, PlainHistogram>>;
  findRate?: FindRateResult;
  scanWorkers?: ScanWorkersResult;
}

/** saturated: the pool did not sustain the rate (a failed trial whatever its p99) */
export interface FindRateTrial { rateHz: number; p99_us: number | null; saturated: boolean; withinBudget: boolean; events: number }

export interface FindRateResult {
  budgetUs: number;
  /** the workers every trial ran (--workers, else the open loop's default) */
  workers: number;
  /** highest rate tried whose end-to-end p99 stayed within the budget; null if none did */
  rateHz: number | null;
  /** the highest rate the search tries (the closed loop's events/s) passed: the rate is at least rateHz */
  atCeiling: boolean;
  trials: FindRateTrial[];
}

/** one closed-loop run: service time is its per-event figure (a closed loop has no end-to-end) */
export interface ScanWorkersPoint { workers: number; eventsPerSecond: number; speedup: number; service_p50_us: number | null; service_mean_us: number | null }

export interface ScanWorkersResult {
  points: ScanWorkersPoint[];
}

export interface RenderContext {
  configuration: RunConfiguration;
  shards: { index: number; count: number }[];
  machine: MachineInfo;
  machines?: MachineInfo[];
  partial: boolean;
  partialReason: string | null;
  wallSeconds: number;
  /** how eventsPerSecond was reached, when not events / wallSeconds (a merge) */
  rateBasis?: string;
}

/** Open-loop-only figures of a closed loop are empty, whatever was recorded. */
function openLoopStats(recorder: LatencyRecorder, openLoop: boolean): LatencyStats {
  return (openLoop ? recorder : new LatencyRecorder()).stats();
}

function towersPerEventOf(recorder: LatencyRecorder): TowersPerEvent {
  if (recorder.count === 0) return { mean: null, p50: null, max: null };
  return { mean: Math.round(recorder.meanNs() * 10) / 10, p50: recorder.percentileNs(50), max: recorder.maxNs };
}

/** The engine's check: the reference runs after the timed pass, in workers of its own. */
export const CHECK_APART_FROM_TIMING = 'after the timed pass, in workers of its own: no timing figure includes it';
/** An engine program's check runs in its worker after each answer, so it holds that worker. */
export const CHECK_INSIDE_TIMING = 'in the worker after each answer: it holds the worker, so time with --check none';
export const CHECK_SAMPLE_RULE = 'the events whose hash of event number and check seed falls below the check fraction (every event with --check all)';

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
  // the pileup chain's stages, those with events: a run without pileup steps has none
  const chainStats: Partial<Record<PileupStage, LatencyStats>> = {};
  const chainEncoded: Partial<Record<PileupStage, EncodedLatency>> = {};
  for (const stage of PILEUP_STAGES) {
    if (tally.pileupStages[stage].count === 0) continue;
    chainStats[stage] = tally.pileupStages[stage].stats();
    chainEncoded[stage] = tally.pileupStages[stage].encode();
  }
  const chainRan = Object.keys(chainStats).length > 0;
  const towers = tally.towersPerEvent;
  const scaling = fitScaling(scalingSamples(tally.multiplicity), towers.count > 0 ? towers.minNs : null, towers.count > 0 ? towers.maxNs : null);
  const openLoop = context.configuration.arrival.mode !== 'closed';
  const budgetUs = context.configuration.budgetUs;
  const timed = tally.service.count;
  const program = context.configuration.engine.startsWith('exec:');
  const wallSeconds = context.wallSeconds;
  const summary: RunSummary = {
    format: 'jetlag-run-summary',
    version: SUMMARY_VERSION,
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
    check: {
      ...tally.check,
      mode: context.configuration.check.mode === 'none' ? null : tally.tolerance ? 'tolerance' : 'bit-exact',
      timing: program ? CHECK_INSIDE_TIMING : CHECK_APART_FROM_TIMING,
      sample: CHECK_SAMPLE_RULE,
      ...(tally.tolerance ? { tolerance: summarizeTolerance(tally.tolerance) } : {}),
    },
    ...(program ? { failedEvents: tally.failedEvents, engineRestarts: tally.engineRestarts } : {}),
    latency: {
      service: tally.service.stats(),
      wait: openLoopStats(tally.wait, openLoop),
      return: openLoopStats(tally.returnTrip, openLoop),
      endToEnd: openLoopStats(tally.endToEnd, openLoop),
      stages: stagesStats,
      ...(chainRan ? { pileupStages: chainStats } : {}),
      ...(tally.grooming.count > 0 ? { grooming: tally.grooming.stats() } : {}),
      ...(program ? { roundTrip: tally.roundTrip.stats(), pipe: tally.pipe.stats() } : {}),
    },
    harness: harnessFigures(tally, openLoop),
    saturation: openLoop ? tally.saturation : null,
    towersPerEvent: towersPerEventOf(towers),
    machineLoad: tally.machineLoad,
    budget: budgetUs === null ? null : {
      budgetUs,
      measuredOn: context.configuration.arrival.mode === 'closed' ? 'worker time' : 'end-to-end',
      over: tally.overBudget,
      fractionOver: timed === 0 ? 0 : tally.overBudget / timed,
    },
    throughput: {
      eventsPerSecond: wallSeconds > 0 ? events.read / wallSeconds : 0,
      wallSeconds,
      bytesRead: tally.bytesRead,
      basis: context.rateBasis ?? 'events read / wall time of the run',
    },
    scaling,
    histograms: {
      service: tally.service.encode(),
      wait: tally.wait.encode(),
      return: tally.returnTrip.encode(),
      endToEnd: tally.endToEnd.encode(),
      dispatchLateness: tally.dispatchLateness.encode(),
      ...(openLoop ? harnessHistograms(tally) : {}),
      towersPerEvent: towers.encode(),
      stages: stagesEncoded,
      ...(chainRan ? { pileupStages: chainEncoded } : {}),
      ...(tally.grooming.count > 0 ? { grooming: tally.grooming.encode() } : {}),
      ...(program ? { roundTrip: tally.roundTrip.encode(), pipe: tally.pipe.encode() } : {}),
      multiplicity: tally.multiplicity.recorders.flatMap((recorder, bin) =>
        recorder ? [{ bin, sumTowers: tally.multiplicity.sumTowers[bin], histogram: recorder.encode() }] : []),
    },
  };
  summary.plainHistograms = plainHistograms(summary.histograms as unknown as Record<string, unknown>);
  return summary;
}
